"""Files that are whole or absent: temporary names, atomic publication, manifests.

* Every temporary file frameshift makes is named
  ``.{final name}.frameshift-{host}-{pid}-{random}.part`` in the folder of
  the file it becomes, so a later run can tell its own leftovers (same
  host, process gone) from anything else: :func:`remove_stale` deletes
  those and nothing else.
* :func:`publish` writes a NetCDF file and its manifest to temporary files
  and gives both their final names only once both are complete; on any
  failure (``KeyboardInterrupt`` and SIGTERM included) nothing is left under
  a final name and no temporary file remains.
* A full disk, a read-only or unwritable folder become a
  :class:`~frameshift.errors.WriteError` with one plain sentence instead of
  the library's "NetCDF: HDF error".
* The manifest records the inputs (size, mtime), the settings, the output's
  size and mtime and, when asked, its SHA-256, so a re-run can check the
  content of an output before trusting it (:func:`is_current`).
"""

from __future__ import annotations

import concurrent.futures
import contextlib
import ctypes
import datetime as _dt
import errno
import functools
import hashlib
import json
import os
import re
import shutil
import socket
import sys
import tempfile
import threading
from collections.abc import Callable, Iterable, Mapping, Sequence
from pathlib import Path

from frameshift.errors import WriteError

__all__ = [
    "MANIFEST_SUFFIX",
    "SyncAhead",
    "check_writable",
    "file_checksum",
    "is_current",
    "manifest_path",
    "manifest_record",
    "publish",
    "remove_stale",
    "write_manifest",
]

MANIFEST_SUFFIX = ".frameshift.json"
MANIFEST_FORMAT = 1
#: Below this many free bytes, a failed write is put down to a full disk.
FULL_DISK_BYTES = 4 * 2**20
_TAG = "frameshift"
_TEMP = re.compile(
    r"^\.(?P<name>.+)\." + _TAG + r"-(?P<host>[0-9a-f]{8})-(?P<pid>\d+)-[^.]+\.part$"
)
_DISK_ERRNOS = {errno.ENOSPC, errno.EDQUOT, errno.EROFS, errno.EACCES, errno.EPERM, errno.EFBIG}


# --- temporary names ----------------------------------------------------------------
def _host() -> str:
    return hashlib.sha256(socket.gethostname().encode()).hexdigest()[:8]


def _temp_file(final: Path) -> Path:
    fd, name = tempfile.mkstemp(
        prefix=f".{final.name}.{_TAG}-{_host()}-{os.getpid()}-", suffix=".part", dir=final.parent
    )
    os.close(fd)
    return Path(name)


def _alive(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:  # exists, owned by someone else
        return True
    return True


def remove_stale(finals: Iterable[str | os.PathLike]) -> list[Path]:
    """Delete temporary files that earlier, killed runs left for these final paths.

    Only files named as this module names them, for one of ``finals`` (or its
    manifest), made on this host by a process that no longer exists, are
    removed; a concurrent run's files and anything else are left alone.
    Returns the paths removed.

    Examples
    --------
    >>> remove_stale(["nowhere/a.nc"])
    []
    """
    wanted: dict[Path, set[str]] = {}
    for final in map(Path, finals):
        wanted.setdefault(final.parent, set()).update({final.name, final.name + MANIFEST_SUFFIX})
    removed, host = [], _host()
    for folder, names in wanted.items():
        try:
            entries = list(os.scandir(folder))
        except OSError:
            continue
        for entry in entries:
            match = _TEMP.match(entry.name)
            if not match or match["name"] not in names or match["host"] != host:
                continue
            if _alive(int(match["pid"])) or entry.is_symlink():
                continue
            with contextlib.suppress(FileNotFoundError):
                _remove(Path(entry.path))  # a file, or a Zarr store's directory
                removed.append(Path(entry.path))
    return removed


# --- explaining file-system failures --------------------------------------------------
def _free_bytes(folder: Path) -> int | None:
    try:
        st = os.statvfs(folder)
    except (OSError, AttributeError):
        return None
    return st.f_bavail * st.f_frsize


def _explain(exc: BaseException, folder: Path, what: str) -> WriteError | None:
    """A :class:`WriteError` naming the cause if ``exc`` came from the file system."""
    code = getattr(exc, "errno", None)
    free = _free_bytes(folder)
    if code in (errno.EROFS, errno.EACCES, errno.EPERM):
        reason = "is read-only" if code == errno.EROFS else "is not writable"
        return WriteError(
            f"cannot write {what}: the folder {os.fspath(folder)!r} {reason}; "
            "choose another --out or change its permissions",
            variable="out", expected="a writable folder", found=os.strerror(code),
        )
    if code in (errno.ENOSPC, errno.EDQUOT, errno.EFBIG) or (
        isinstance(exc, OSError | RuntimeError) and free is not None and free < FULL_DISK_BYTES
    ):
        left = f" ({free} bytes free)" if free is not None else ""
        return WriteError(
            f"cannot write {what}: the disk holding {os.fspath(folder)!r} is full{left}; "
            "free some space or choose another --out",
            variable="out", expected="room on the disk", found=f"{free} bytes free",
        )
    if isinstance(exc, OSError) and code is not None:
        return WriteError(
            f"cannot write {what} in {os.fspath(folder)!r}: {os.strerror(code)}",
            variable="out", expected="a writable folder", found=os.strerror(code),
        )
    return None


def check_writable(folder: str | os.PathLike) -> Path:
    """Create ``folder`` if needed and prove a file can be made in it.

    Raises :class:`~frameshift.errors.WriteError` with one plain sentence otherwise.

    Examples
    --------
    >>> check_writable("out")  # doctest: +SKIP
    PosixPath('out')
    """
    folder = Path(folder)
    try:
        folder.mkdir(parents=True, exist_ok=True)
        probe = _temp_file(folder / "write-check")
        probe.unlink()
    except OSError as exc:
        nearest = folder
        while not nearest.exists() and nearest != nearest.parent:
            nearest = nearest.parent
        raise (_explain(exc, nearest, "the outputs") or WriteError(
            f"cannot write in {os.fspath(folder)!r}: {exc.strerror or exc}",
            variable="out", expected="a writable folder", found=str(exc),
        )) from exc
    return folder


# --- manifests ------------------------------------------------------------------------
def manifest_path(output: str | os.PathLike) -> Path:
    """The JSON sidecar recording how ``output`` was made.

    Examples
    --------
    >>> manifest_path("out/a.nc").name
    'a.nc.frameshift.json'
    """
    output = Path(output)
    return output.with_name(output.name + MANIFEST_SUFFIX)


def file_checksum(path: str | os.PathLike) -> str:
    """SHA-256 of a file's bytes (of a store's file names and bytes), as ``"sha256:<hex>"``.

    Examples
    --------
    >>> file_checksum(__file__).startswith("sha256:")
    True
    """
    path = Path(path)
    if not path.is_dir():
        with open(path, "rb") as fh:
            return "sha256:" + hashlib.file_digest(fh, "sha256").hexdigest()
    digest = hashlib.sha256()
    for file in sorted(p for p in path.rglob("*") if p.is_file()):
        digest.update(str(file.relative_to(path)).encode() + b"\0")
        with open(file, "rb") as fh:
            digest.update(hashlib.file_digest(fh, "sha256").digest())
    return "sha256:" + digest.hexdigest()


def _stat(path: Path, named: Path | None = None) -> dict:
    st = path.stat()
    size, mtime = st.st_size, st.st_mtime_ns
    if path.is_dir():  # a Zarr store: every file in it counts
        size = 0
        for root, _, names in os.walk(path):
            for name in names:
                fst = os.stat(os.path.join(root, name))
                size += fst.st_size
                mtime = max(mtime, fst.st_mtime_ns)
    return {"path": str((named or path).resolve()), "size": size, "mtime_ns": mtime}


def _normal(settings: Mapping) -> object:
    return json.loads(json.dumps(settings, sort_keys=True, default=str))


def manifest_record(
    output: Path,
    inputs: Sequence[str | os.PathLike],
    settings: Mapping,
    *,
    command: str = "",
    checksum: bool = False,
    data_file: Path | None = None,
) -> dict:
    """What the manifest of ``output`` says (``data_file``: where its bytes are now)."""
    from frameshift._version import __version__

    data_file = data_file or output
    record = {
        "frameshift_manifest": MANIFEST_FORMAT,
        "frameshift_version": __version__,
        "created": _dt.datetime.now(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "command": command,
        "settings": _normal(settings),
        "inputs": [_stat(Path(p)) for p in inputs],
        "output": _stat(data_file, output),
    }
    if checksum:
        record["output"]["checksum"] = file_checksum(data_file)
    return record


def _write_json(record: dict, final: Path, *, sync: bool = True) -> Path:
    tmp = _temp_file(final)
    try:
        with open(tmp, "w") as fh:
            json.dump(record, fh, indent=1, sort_keys=True)
            fh.write("\n")
            fh.flush()
            if sync:
                os.fsync(fh.fileno())
        os.chmod(tmp, 0o666 & ~_umask())
    except BaseException:
        with contextlib.suppress(OSError):
            tmp.unlink()
        raise
    return tmp


def write_manifest(
    output: str | os.PathLike,
    inputs: Sequence[str | os.PathLike],
    settings: Mapping,
    *,
    command: str = "",
    checksum: bool = False,
) -> Path:
    """Record how an existing ``output`` was made, atomically (temporary file, rename).

    Examples
    --------
    >>> write_manifest("out/a.nc", ["a.nc"], {"to": "inertial"})  # doctest: +SKIP
    """
    output = Path(output)
    record = manifest_record(output, inputs, settings, command=command, checksum=checksum)
    target = manifest_path(output)
    tmp = _write_json(record, target)
    try:
        os.replace(tmp, target)
    except BaseException:
        with contextlib.suppress(OSError):
            tmp.unlink()
        raise
    return target


def is_current(
    output: str | os.PathLike,
    inputs: Sequence[str | os.PathLike],
    settings: Mapping,
    *,
    verify: bool = False,
) -> tuple[bool, str]:
    """Whether ``output`` is complete and newer than ``inputs``, made with ``settings``.

    With ``verify``, the output's bytes must also match the checksum its
    manifest records (an output without one is not trusted).

    Examples
    --------
    >>> is_current("nowhere/a.nc", ["a.nc"], {})
    (False, 'no output yet')
    """
    from frameshift._version import __version__

    output = Path(output)
    if not output.exists():
        return False, "no output yet"
    try:
        record = json.loads(manifest_path(output).read_text())
        made_record = dict(record.get("output") or {})
    except (OSError, ValueError, TypeError):
        return False, "no readable manifest"
    if record.get("frameshift_version") != __version__:
        return False, f"made by frameshift {record.get('frameshift_version')}"
    if record.get("settings") != _normal(settings):
        return False, "made with other settings"
    try:
        now = [_stat(Path(p)) for p in inputs]
        made = _stat(output)
    except OSError as exc:
        return False, str(exc)
    recorded_sum = made_record.pop("checksum", None)
    if record.get("inputs") != now:
        return False, "inputs changed since"
    if made_record != made:
        return False, "output changed since it was written"
    if any(made["mtime_ns"] < i["mtime_ns"] for i in now):
        return False, "output older than an input"
    if verify:
        if recorded_sum is None:
            return False, "no checksum recorded to verify the output against"
        try:
            actual = file_checksum(output)
        except OSError as exc:
            return False, str(exc)
        if actual != recorded_sum:
            return False, "output content differs from its recorded checksum"
        return True, "up to date (checksum verified)"
    return True, "up to date"


# --- publishing -----------------------------------------------------------------------
def publish(
    write: Callable[[Path], Iterable[Path] | None],
    path: str | os.PathLike,
    *,
    manifest: Mapping | None = None,
    sync: bool = True,
) -> Path:
    """Make ``path`` with ``write(temporary_path)``, and its manifest, both or neither.

    ``manifest`` holds the :func:`manifest_record` arguments (``inputs``,
    ``settings``, ``command``, ``checksum``). The data file is written and
    fsynced under a temporary name, its manifest is written and fsynced under
    another, then both are renamed into place; if the second rename fails
    the first is undone. On any failure both temporary files are removed,
    and a file-system cause is raised as :class:`~frameshift.errors.WriteError`.
    ``write`` may return the files of a store it has already synced itself
    (see :class:`SyncAhead`); those are not synced a second time.
    ``sync=False`` syncs nothing: a failure or interruption still leaves
    nothing under ``path``, but after a power cut or system crash the renamed
    output may be empty or partial (for scratch outputs, or file systems where
    syncing is slow).
    """
    path = Path(path)
    what = repr(os.fspath(path))
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = _temp_file(path)
    except OSError as exc:
        raise (_explain(exc, _existing(path.parent), what) or exc) from exc
    side = aside = None
    try:
        synced = write(tmp)  # a file, or (a Zarr store) a directory in place of the empty file
        if sync:
            _flush(tmp, skip=frozenset(synced or ()))
        os.chmod(tmp, (0o777 if tmp.is_dir() else 0o666) & ~_umask())
        if manifest is not None:
            record = manifest_record(path, data_file=tmp, **manifest)
            side = _write_json(record, manifest_path(path), sync=sync)
        else:
            manifest_path(path).unlink(missing_ok=True)
        if path.is_dir() and not path.is_symlink():  # a store cannot be renamed over
            if exchange(tmp, path):  # one step: the old store now has the temporary name
                aside, tmp = tmp, None
            else:  # moved aside, then the new one in: a moment with no store at ``path``
                aside = _temp_file(path)
                aside.unlink()
                os.replace(path, aside)
        if tmp is not None:
            os.replace(tmp, path)
        if side is not None:
            try:
                os.replace(side, manifest_path(path))
            except BaseException:
                with contextlib.suppress(OSError):
                    _remove(path)
                raise
    except BaseException as exc:
        for leftover in (tmp, side):
            if leftover is not None:
                with contextlib.suppress(OSError):
                    _remove(leftover)
        if aside is not None and not path.exists():
            with contextlib.suppress(OSError):
                os.replace(aside, path)  # the earlier store back
                aside = None
        if isinstance(exc, OSError | RuntimeError) and not isinstance(exc, WriteError):
            better = _explain(exc, path.parent, what)
            if better is not None:
                raise better from exc
        raise
    finally:
        if aside is not None:
            with contextlib.suppress(OSError):
                _remove(aside)
    if sync:
        _flush_dir(path.parent)
    return path


_RENAME_EXCHANGE = 2  # linux/fs.h
_AT_FDCWD = -100


def exchange(a: str | os.PathLike, b: str | os.PathLike) -> bool:
    """Swap two existing paths in one atomic step; False where the system cannot.

    Linux's ``renameat2(..., RENAME_EXCHANGE)`` (kernel 3.15, glibc 2.28; most
    local file systems): readers of ``b`` see the old tree or the new one,
    never neither. Elsewhere, or on a file system without it, nothing is
    changed and False is returned, so the caller can fall back to two renames.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> d = pathlib.Path(tempfile.mkdtemp())
    >>> (d / "a").mkdir(); (d / "b").mkdir(); (d / "a" / "new").touch()
    >>> if exchange(d / "a", d / "b"):
    ...     assert (d / "b" / "new").exists() and not (d / "a" / "new").exists()
    """
    libc = _libc()
    if libc is None:
        return False
    result = libc.renameat2(_AT_FDCWD, os.fsencode(a), _AT_FDCWD, os.fsencode(b),
                            _RENAME_EXCHANGE)
    if result == 0:
        return True
    err = ctypes.get_errno()
    if err in (errno.ENOSYS, errno.EINVAL, errno.ENOTSUP, errno.EOPNOTSUPP, errno.EXDEV):
        return False  # not offered here: the caller falls back
    raise OSError(err, os.strerror(err), os.fspath(b))


@functools.cache
def _libc():
    """The C library's ``renameat2``, or None where there is none (not Linux, old glibc)."""
    if not sys.platform.startswith("linux"):
        return None
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        function = libc.renameat2
    except (OSError, AttributeError):
        return None
    function.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p,
                         ctypes.c_uint]
    function.restype = ctypes.c_int
    return libc


def _remove(path: Path) -> None:
    """Remove a file, or a directory tree (a Zarr store)."""
    if path.is_dir() and not path.is_symlink():
        shutil.rmtree(path)
    else:
        path.unlink()


def _existing(folder: Path) -> Path:
    while not folder.exists() and folder != folder.parent:
        folder = folder.parent
    return folder


#: Files of a store synced at once: the disk gets many requests to order, not one at a time.
_SYNC_THREADS = 8


def _flush(path: Path, skip: frozenset[Path] = frozenset()) -> None:
    """Sync a file, or every file (but those in ``skip``) and folder of a store."""
    if not path.is_dir():
        _fsync_file(path)
        return
    files, folders = [], []
    for root, _, names in os.walk(path):
        folders.append(Path(root))
        files += [f for f in (Path(root) / name for name in names) if f not in skip]
    with concurrent.futures.ThreadPoolExecutor(_SYNC_THREADS) as pool:
        list(pool.map(_fsync_file, files))  # list(): the first error is raised here
    for folder in reversed(folders):  # each folder's entries, the deepest first
        _flush_dir(folder)


class SyncAhead:
    """Sync the files of a store on other threads while the rest is still being written.

    Syncing a store only once it is complete leaves the disk idle while the
    data are computed, then makes the writer wait for all of it. Each file
    handed to :meth:`submit` once it is complete (a write finished, a later
    rewrite submitted again) is synced at once on one of a few threads;
    :meth:`finish` waits for them and returns the files synced, for
    :func:`publish` to skip. A file gone before its turn is left to
    :func:`publish`, which syncs whatever the store holds at the end.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> f = pathlib.Path(tempfile.mkdtemp()) / "chunk"
    >>> _ = f.write_bytes(b"data")
    >>> with SyncAhead() as ahead:
    ...     ahead.submit(f)
    ...     sorted(ahead.finish()) == [f]
    True
    """

    def __init__(self, threads: int = 4) -> None:
        self._pool = concurrent.futures.ThreadPoolExecutor(
            threads, thread_name_prefix="frameshift-sync"
        )
        self._lock = threading.Lock()
        self._pending: list[tuple[Path, concurrent.futures.Future]] = []

    def submit(self, path: str | os.PathLike) -> None:
        """Sync ``path`` (a complete file) on a sync thread."""
        path = Path(path)
        future = self._pool.submit(_fsync_if_present, path)
        with self._lock:
            self._pending.append((path, future))

    def finish(self) -> frozenset[Path]:
        """Wait for every sync asked for; the files synced (the first error is raised)."""
        self._pool.shutdown(wait=True)
        with self._lock:
            pending = list(self._pending)
        last = {}  # a file written again counts as synced only if its last sync was done
        for path, future in pending:
            last[path] = future.result()
        return frozenset(path for path, done in last.items() if done)

    def close(self) -> None:
        """Stop: syncs not yet begun are dropped, those running are waited for."""
        self._pool.shutdown(wait=True, cancel_futures=True)

    def __enter__(self) -> SyncAhead:
        return self

    def __exit__(self, *exc_info: object) -> None:
        self.close()


def _fsync_if_present(path: Path) -> bool:
    try:
        _fsync_file(path)
    except FileNotFoundError:  # removed or renamed since: the final pass sees what is left
        return False
    return True


def _fsync_file(path: Path) -> None:
    with open(path, "rb") as fh:
        os.fsync(fh.fileno())


def _flush_dir(path: Path) -> None:
    with contextlib.suppress(OSError):
        fd = os.open(path, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask
