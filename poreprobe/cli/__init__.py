"""The command line: ``main.py`` (parser, lazy command loading), ``common.py``
(shared options) and one module per command: parse -> call the API -> print / export.
"""
