"""Planned outputs: every file a command writes, checked first and written all or nothing.

An :class:`OutputPlan` collects the output paths of one command before any work is
done and checks each (its folder exists, it is not a folder, a block device or a
socket, it can be written, its name is not too long, it is not the same file as an
input, no two outputs name the same file). While the plan is active (``with plan:``),
every writer of the package (:func:`write_output`, hence ``to_json``, ``to_csv``,
figures, maps, meshes) stages its data in the plan instead of writing. At
:meth:`OutputPlan.commit` every regular file is written to a temporary file next to
its target, then the write-through targets are written, and only when all of that
succeeded are the temporary files renamed over their targets. On any failure the
temporary files are removed and no target is touched.

* Regular files (and new names): temporary file in the target's folder, then
  ``os.replace``. An existing file keeps its permission bits.
* Character devices (``/dev/null``), FIFOs and the standard streams
  (``/dev/stdout``, ``/dev/stderr``, ``/dev/fd/N``, ``/proc/self/fd/N``): written
  through (opened for writing), never replaced.
* A symbolic link: written through to the file it points to (temporary file next to
  that file, then a rename there); the link itself stays.

Errors name the path the user gave, never the temporary file.

Outside a plan, :func:`write_output` makes a one-file plan, so library calls get the
same checks.
"""

from __future__ import annotations

import contextlib
import contextvars
import os
import re
import stat
import sys
import tempfile
from collections.abc import Callable, Iterable
from dataclasses import dataclass

from poreprobe.errors import InputError

#: Prefix of the temporary files (hidden, removed on failure).
TEMP_PREFIX = ".poreprobe-"
_FD_PATH = re.compile(r"^/(?:dev/(stdout|stderr|stdin|fd/(\d+))|proc/(?:self|\d+)/fd/(\d+))$")
_ACTIVE: contextvars.ContextVar[OutputPlan | None] = contextvars.ContextVar(
    "poreprobe_output_plan", default=None
)


@dataclass(frozen=True)
class PlannedOutput:
    """One checked output.

    Attributes
    ----------
    path : str
        The path as the user gave it (used in every message).
    target : str
        Where the data goes: the path with symbolic links resolved.
    mode : str
        ``"replace"`` (temporary file + rename), ``"device"`` (open and write
        through) or ``"fd"`` (an already open file descriptor, ``fd``).
    fd : int or None
        File descriptor of ``/dev/stdout`` and the like.
    key : tuple
        Identity of the file: (st_dev, st_ino) when it exists, else its resolved path.
    """

    path: str
    target: str
    mode: str
    fd: int | None
    key: tuple


def _fail(path: str, why: str) -> InputError:
    return InputError(f"cannot write {path}: {why}")


def _fd_of(path: str) -> int | None:
    """File descriptor named by a path such as /dev/stdout or /proc/self/fd/3 (else None)."""
    m = _FD_PATH.match(path)
    if not m:
        return None
    if m.group(1) in ("stdout", "stderr", "stdin"):
        return {"stdin": 0, "stdout": 1, "stderr": 2}[m.group(1)]
    return int(m.group(2) or m.group(3))


def _walk_links(path: str) -> tuple[str, int | None]:
    """Follow symbolic links by hand; stop early at a file-descriptor path."""
    current = os.path.abspath(path)
    for _ in range(40):
        fd = _fd_of(current)
        if fd is not None:
            return current, fd
        if not os.path.islink(current):
            return os.path.realpath(current), None
        link = os.readlink(current)
        current = os.path.normpath(os.path.join(os.path.dirname(current), link))
    raise _fail(path, "too many levels of symbolic links")


def _name_limits(folder: str) -> tuple[int, int]:
    try:
        return os.pathconf(folder, "PC_NAME_MAX"), os.pathconf(folder, "PC_PATH_MAX")
    except (OSError, ValueError):
        return 255, 4096


def input_identities(paths: Iterable) -> dict[tuple[int, int], str]:
    """(st_dev, st_ino) of each existing input file -> the path given."""
    out = {}
    for p in paths:
        try:
            st = os.stat(os.fspath(p))
        except (OSError, TypeError, ValueError):
            continue
        if stat.S_ISREG(st.st_mode):
            out.setdefault((st.st_dev, st.st_ino), os.fspath(p))
    return out


def check_output_path(path, inputs: dict[tuple[int, int], str] | None = None) -> PlannedOutput:
    """Check one output path and say how it will be written.

    Parameters
    ----------
    path : str or os.PathLike
        The output as the user gave it.
    inputs : dict, optional
        ``input_identities`` of the command's inputs: an output that is the same
        file as one of them is refused.

    Returns
    -------
    PlannedOutput

    Raises
    ------
    InputError
        Naming ``path``: missing folder, a folder, a block device or socket,
        read-only file or folder, name too long, same file as an input.
    """
    try:
        path = os.fspath(path)
    except TypeError as exc:
        raise InputError(f"output path must be a file name, got {path!r}") from exc
    if not isinstance(path, str) or not path.strip():
        raise InputError(f"output path must be a non-empty file name, got {path!r}")
    if "\0" in path:
        raise _fail(path.replace("\0", "\\0"), "the name holds a NUL character")
    target, fd = _walk_links(path)
    if fd == 0:
        raise _fail(path, "it is the standard input")
    if fd is not None:
        return PlannedOutput(path, target, "fd", fd, ("fd", fd))
    try:
        st = os.stat(target)
    except FileNotFoundError:
        st = None
    except OSError as exc:
        raise _fail(path, exc.strerror or str(exc)) from None
    if st is not None:
        kind = st.st_mode
        if stat.S_ISDIR(kind):
            raise _fail(path, "it is a directory")
        if stat.S_ISCHR(kind) or stat.S_ISFIFO(kind):
            return PlannedOutput(path, target, "device", None, (st.st_dev, st.st_ino))
        if stat.S_ISBLK(kind):
            raise _fail(path, "it is a block device")
        if stat.S_ISSOCK(kind):
            raise _fail(path, "it is a socket")
        if inputs and (st.st_dev, st.st_ino) in inputs:
            raise _fail(path, f"it is the same file as the input {inputs[(st.st_dev, st.st_ino)]}")
        if not os.access(target, os.W_OK):
            raise _fail(path, "the file is read-only")
    folder = os.path.dirname(target) or "."
    if path.endswith(os.sep) or not os.path.basename(target):
        raise _fail(path, "it names a folder, not a file")
    if not os.path.isdir(folder):
        what = "is not a folder" if os.path.exists(folder) else "does not exist"
        if os.path.islink(path):  # a link into a missing folder: name where it points
            raise _fail(path, f"it links into folder {folder}, which {what}")
        raise _fail(path, f"folder {os.path.dirname(os.path.abspath(path))} {what}")
    name_max, path_max = _name_limits(folder)
    name_len = len(os.fsencode(os.path.basename(target)))
    if name_len > name_max:
        raise _fail(path, f"file name too long ({name_len} bytes, limit {name_max})")
    if len(os.fsencode(target)) >= path_max:
        raise _fail(path, f"path too long (limit {path_max} bytes)")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise _fail(path, f"folder {os.path.dirname(os.path.abspath(path)) or '.'} is read-only")
    key = (st.st_dev, st.st_ino) if st is not None else ("new", os.path.normcase(target))
    return PlannedOutput(path, target, "replace", None, key)


@dataclass
class _Staged:
    out: PlannedOutput
    data: str | bytes
    kind: str
    payload: object = None


class OutputPlan:
    """The outputs of one command: checked up front, written all or nothing.

    Parameters
    ----------
    inputs : iterable of path, optional
        Input files; an output that is the same file (device and inode) is refused.
    annotate : callable, optional
        ``annotate(kind, data, payload) -> data`` run on each staged output at
        commit time (the command line adds warnings and provenance to JSON and CSV).

    Examples
    --------
    >>> import os, tempfile
    >>> folder = tempfile.mkdtemp()
    >>> plan = OutputPlan()
    >>> with plan:
    ...     _ = plan.add(os.path.join(folder, "a.txt"))
    ...     write_output(os.path.join(folder, "a.txt"), "hello\\n")
    ...     plan.commit()
    >>> open(os.path.join(folder, "a.txt")).read()
    'hello\\n'
    """

    def __init__(self, inputs: Iterable = (), *, annotate: Callable | None = None):
        self._inputs = input_identities(inputs)
        self._annotate = annotate
        self._planned: dict[str, PlannedOutput] = {}
        self._staged: dict[str, _Staged] = {}
        self._on_abort: list[Callable[[], None]] = []
        self._token = None
        self.committed = False

    # ------------------------------------------------------------------ planning
    def add(self, path) -> PlannedOutput:
        """Check ``path`` and plan it (idempotent for the same path)."""
        out = check_output_path(path, self._inputs)
        if out.path in self._planned:
            return self._planned[out.path]
        for other in self._planned.values():
            if other.key == out.key and not _is_char_device(out):
                raise InputError(
                    f"two outputs name the same file: {other.path} and {out.path}"
                    if other.path != out.path
                    else f"the output {out.path} is named twice"
                )
        self._planned[out.path] = out
        return out

    def add_all(self, paths: Iterable) -> None:
        """Plan several outputs (see :meth:`add`)."""
        for p in paths:
            self.add(p)

    def on_abort(self, func: Callable[[], None]) -> None:
        """Run ``func`` when the plan is abandoned (e.g. remove a folder it created)."""
        self._on_abort.append(func)

    @property
    def outputs(self) -> tuple[PlannedOutput, ...]:
        """The planned outputs, in the order they were added."""
        return tuple(self._planned.values())

    # ------------------------------------------------------------------ staging
    def stage(self, path, data: str | bytes, *, kind: str = "data", payload=None) -> None:
        """Keep ``data`` for ``path`` until :meth:`commit` (plans the path if new)."""
        path = os.fspath(path)
        out = self._planned.get(path) or self.add(path)
        self._staged[out.path] = _Staged(out, data, kind, payload)

    # ------------------------------------------------------------------ writing
    def commit(self) -> None:
        """Write every staged output: temporary files, write-through targets, renames."""
        temps: list[tuple[str, PlannedOutput]] = []
        try:
            staged = list(self._staged.values())
            for item in staged:
                if item.out.mode == "replace":
                    temps.append((self._write_temp(item), item.out))
            for item in staged:
                if item.out.mode != "replace":
                    self._write_through(item)
            with _sigint_held():  # the renames are not cut in half by Ctrl-C
                while temps:
                    tmp, out = temps[0]
                    try:
                        os.replace(tmp, out.target)
                    except OSError as exc:
                        raise _fail(out.path, exc.strerror or str(exc)) from None
                    temps.pop(0)
                self.committed = True
                self._staged.clear()
        except BaseException:
            for tmp, _ in temps:
                _remove(tmp)
            raise

    def _data(self, item: _Staged) -> bytes:
        data = item.data
        if self._annotate is not None:
            data = self._annotate(item.kind, data, item.payload)
        return data.encode("utf-8") if isinstance(data, str) else bytes(data)

    def _write_temp(self, item: _Staged) -> str:
        out = item.out
        data = self._data(item)
        folder = os.path.dirname(out.target) or "."
        try:
            fd, tmp = tempfile.mkstemp(prefix=TEMP_PREFIX, suffix=".tmp", dir=folder)
        except OSError as exc:
            raise _fail(out.path, exc.strerror or str(exc)) from None
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
            os.chmod(tmp, _mode_for(out.target))
        except BaseException as exc:
            _remove(tmp)
            if isinstance(exc, OSError):
                raise _fail(out.path, exc.strerror or str(exc)) from None
            raise
        return tmp

    def _write_through(self, item: _Staged) -> None:
        out = item.out
        data = self._data(item)
        try:
            if out.mode == "fd":
                for stream in (sys.stdout, sys.stderr):
                    try:
                        stream.flush()
                    except (OSError, ValueError):
                        pass
                view = memoryview(data)
                while view:
                    view = view[os.write(out.fd, view) :]
            else:
                with open(out.target, "wb") as fh:
                    fh.write(data)
        except OSError as exc:
            raise _fail(out.path, exc.strerror or str(exc)) from None

    def abort(self) -> None:
        """Drop everything staged (nothing was written) and run the abort hooks."""
        self._staged.clear()
        hooks, self._on_abort = self._on_abort, []
        for hook in reversed(hooks):
            try:
                hook()
            except OSError:
                pass

    # ------------------------------------------------------------------ context
    def __enter__(self) -> OutputPlan:
        self._token = _ACTIVE.set(self)
        return self

    def __exit__(self, exc_type, exc, tb) -> None:
        _ACTIVE.reset(self._token)
        if not self.committed:
            self.abort()


@contextlib.contextmanager
def _sigint_held():
    """Hold SIGINT back (delivered on exit) while the main thread renames the outputs."""
    import signal
    import threading

    if threading.current_thread() is not threading.main_thread():
        yield
        return
    old = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT})
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, old)


def _is_char_device(out: PlannedOutput) -> bool:
    """Character devices (/dev/null) may take several outputs; other files may not."""
    try:
        return out.mode == "device" and stat.S_ISCHR(os.stat(out.target).st_mode)
    except OSError:
        return False


def _mode_for(target: str) -> int:
    """Permission bits for a new file at target: the old file's, or 0666 minus umask."""
    try:
        return stat.S_IMODE(os.stat(target).st_mode)
    except OSError:
        mask = os.umask(0)
        os.umask(mask)
        return 0o666 & ~mask


def _remove(path: str) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def active_plan() -> OutputPlan | None:
    """The plan of the running command, if any."""
    return _ACTIVE.get()


def write_output(path, data: str | bytes, *, kind: str = "data", payload=None) -> None:
    """Write ``data`` to ``path`` safely (staged in the active plan, else at once).

    Parameters
    ----------
    path : str or os.PathLike
    data : str or bytes
        Text is written as UTF-8.
    kind : str
        What the data is (``"json"``, ``"csv"``, ``"data"``), for the plan's annotator.
    payload : object, optional
        The object behind the text (the JSON document), for the annotator.
    """
    if not isinstance(data, str | bytes | bytearray):
        raise InputError(f"data must be text or bytes, got {type(data).__name__}")
    plan = active_plan()
    if plan is not None:
        plan.stage(path, data, kind=kind, payload=payload)
        return
    with OutputPlan() as single:
        single.stage(path, data, kind=kind, payload=payload)
        single.commit()


def __getattr__(name):
    # structure writing moved to structure_writer; the old names stay importable here
    if name in ("write_structure", "to_gemmi_structure", "coords_rounded"):
        from poreprobe.io import structure_writer

        return getattr(structure_writer, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


__all__ = [
    "OutputPlan",
    "PlannedOutput",
    "TEMP_PREFIX",
    "active_plan",
    "check_output_path",
    "input_identities",
    "write_output",
]
