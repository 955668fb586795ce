"""Readiness checks of a model, permeation verdicts and comparison of models."""
