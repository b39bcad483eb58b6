"""Where a batch run reads and writes: input discovery, output paths, printable names.

Inputs are files, glob patterns or folders (searched for ``*.nc``,
following symbolic links, refusing loops and broken links); outputs mirror
the input tree under the output folder and never leave it. Names that came
from outside are printed through :func:`printable`.
"""

from __future__ import annotations

import glob
import os
import unicodedata
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path

from frameshift.errors import ConventionError, MissingInputError, UnsupportedInputError

__all__ = ["Job", "find_inputs", "plan_jobs", "printable"]

_HAS_MAGIC = set("*?[")


@dataclass(frozen=True)
class Job:
    """One output to make, and the input file(s) it is made from."""

    inputs: tuple[Path, ...]
    output: Path

    @property
    def source(self) -> str:
        """The inputs as a message names them (``a.nc, b.nc``)."""
        return ", ".join(map(str, self.inputs))


def printable(text: str) -> str:
    r"""``text`` with control and other unprintable characters shown as escapes.

    File and variable names come from outside; printed raw, a name holding
    an escape sequence could rewrite the terminal or forge a line.

    Examples
    --------
    >>> printable("a\x1b[2Jb\nc")
    'a\\x1b[2Jb\\nc'
    """
    out = []
    for ch in str(text):
        if unicodedata.category(ch)[0] == "C" and ch != " ":
            out.append(repr(ch)[1:-1])
        else:
            out.append(ch)
    return "".join(out)



def find_inputs(paths: Sequence[str | os.PathLike]) -> list[tuple[Path, Path]]:
    """Expand files, globs and directories (recursing, ``*.nc``) into ``(file, root)`` pairs.

    ``root`` is the directory the file's place in the output tree is taken
    relative to: the directory given, or the file's own directory.

    Examples
    --------
    >>> [f.name for f, _ in find_inputs(["data_demo/tiny_example.nc"])]  # doctest: +SKIP
    ['tiny_example.nc']
    """
    found: dict[Path, tuple[Path, Path]] = {}
    for arg in paths:
        text = os.fspath(arg)
        matches = sorted(glob.glob(text, recursive=True)) if _HAS_MAGIC & set(text) else [text]
        if not matches or not all(os.path.exists(m) for m in matches):
            broken = [m for m in matches if os.path.islink(m)]
            detail = f" (broken symbolic link to {os.readlink(broken[0])!r})" if broken else ""
            raise MissingInputError(
                f"input {text!r} matches no file or directory{detail}",
                variable=text,
                expected="an existing file, directory or glob pattern",
                found="nothing",
            )
        for match in (Path(os.path.abspath(m)) for m in matches):
            if match.is_dir() and not _is_store(match):
                pairs = [(p, match) for p in _walk(match)]
            else:
                pairs = [(match, match.parent)]
            for file, root in pairs:
                found.setdefault(file.resolve(), (file, root))
    if not found:
        raise MissingInputError(
            f"no NetCDF (*.nc) files or Zarr (*.zarr) stores found in "
            f"{[os.fspath(p) for p in paths]}",
            variable="inputs",
            expected="at least one *.nc file or *.zarr store",
            found="none",
        )
    return list(found.values())


def _is_store(path: Path) -> bool:
    """A Zarr store: a ``*.zarr`` folder, or any folder holding Zarr metadata."""
    return path.suffix == ".zarr" or any(
        (path / name).exists() for name in (".zgroup", ".zmetadata", "zarr.json")
    )


def _walk(top: Path) -> list[Path]:
    """Every ``*.nc`` file and ``*.zarr`` store under ``top``, following links; loops refused.

    Paths are kept as found (not resolved), so a linked file or folder keeps
    its place in the tree; a link that leads back to a folder being searched
    is refused with one line naming it, and a broken link to a ``*.nc`` name
    is refused too (it can be neither read nor silently left out).
    """
    files: list[Path] = []

    def visit(folder: Path, chain: dict[tuple[int, int], Path]) -> None:
        try:
            entries = sorted(os.scandir(folder), key=lambda e: e.name)
        except OSError as exc:
            raise MissingInputError(
                f"cannot read the input folder {os.fspath(folder)!r}: {exc.strerror or exc}",
                variable=os.fspath(folder), expected="a readable folder",
                found=str(exc.strerror),
            ) from exc
        for entry in entries:
            path = folder / entry.name
            if entry.is_symlink() and not os.path.exists(path):
                if entry.name.endswith(".nc"):
                    raise MissingInputError(
                        f"input {os.fspath(path)!r} is a broken symbolic link (to "
                        f"{os.readlink(path)!r}); remove it or point it at a file",
                        variable=os.fspath(path), expected="a readable file",
                        found="broken symbolic link",
                    )
                continue
            if entry.is_dir() and _is_store(path):  # a Zarr store is one input
                files.append(path)
            elif entry.is_dir():
                st = os.stat(path)
                key = (st.st_dev, st.st_ino)
                if key in chain:
                    raise UnsupportedInputError(
                        f"the symbolic link {os.fspath(path)!r} leads back to "
                        f"{os.fspath(chain[key])!r}, a folder it lies in (a loop); remove the "
                        "link or give the folders separately",
                        variable=os.fspath(path), expected="a folder tree without loops",
                        found=f"link to {os.readlink(path) if entry.is_symlink() else path}",
                    )
                visit(path, {**chain, key: path})
            elif entry.name.endswith(".nc") and entry.is_file():
                files.append(path)

    st = os.stat(top)
    visit(top, {(st.st_dev, st.st_ino): top})
    return files


def _check_combined_name(name: str) -> None:
    plain = (isinstance(name, str) and name not in ("", ".", "..") and "/" not in name
             and os.sep not in name and not (os.altsep and os.altsep in name)
             and printable(name) == name)
    if not plain:
        raise ConventionError(
            f"--combined-name {printable(repr(name))} must be a plain file name (no folder, "
            "no '..', no control characters); the output goes into --out",
            variable="combined_name", expected="a file name such as combined.nc",
            found=printable(repr(name)),
        )


def plan_jobs(
    paths: Sequence[str | os.PathLike],
    out_dir: str | os.PathLike,
    *,
    combine: bool = False,
    combined_name: str = "combined.nc",
) -> list[Job]:
    """The jobs of a run: outputs mirror the input tree under ``out_dir``.

    Refuses (:class:`~frameshift.errors.ConventionError`) an output that
    would replace an input, and an output directory inside an input
    directory (its outputs would join the inputs of the next run).

    Examples
    --------
    >>> plan_jobs(["data_demo/tiny_example.nc"], "out")[0].output  # doctest: +SKIP
    PosixPath('out/tiny_example.nc')
    """
    if combine:
        _check_combined_name(combined_name)
    pairs = find_inputs(paths)
    out_dir = Path(out_dir)
    out_abs = out_dir.resolve()
    for arg in paths:
        arg_path = Path(arg)
        if arg_path.is_dir() and _within(out_abs, arg_path.resolve()):
            raise ConventionError(
                f"output directory {os.fspath(out_dir)!r} lies inside the input directory "
                f"{os.fspath(arg)!r}; its outputs would become inputs. Choose a directory "
                "outside the inputs",
                variable="out",
                expected="a directory outside the input directories",
                found=os.fspath(out_dir),
            )
    if combine:
        jobs = [Job(tuple(f for f, _ in pairs), out_dir / combined_name)]
    else:
        roots = [r for _, r in pairs]  # absolute, as found: links keep their place
        common = Path(os.path.commonpath(roots)) if len(set(roots)) > 1 else roots[0]
        jobs = [Job((f,), out_dir / f.relative_to(common)) for f, _ in pairs]
    inputs = {f.resolve() for f, _ in pairs}
    out_lexical = os.path.abspath(out_dir)
    for job in jobs:
        if os.path.commonpath([os.path.abspath(job.output), out_lexical]) != out_lexical:
            raise ConventionError(  # defensive: every output goes under --out
                f"output {printable(os.fspath(job.output))!r} would lie outside --out",
                variable="out", expected=f"a path under {out_lexical}",
                found=os.fspath(job.output),
            )
        if job.output.resolve() in inputs:
            raise ConventionError(
                f"output {os.fspath(job.output)!r} would overwrite the input of the same name; "
                "choose another --out directory",
                variable="out",
                expected="an output path that is not an input",
                found=os.fspath(job.output),
            )
    return jobs


def _within(path: Path, parent: Path) -> bool:
    return path == parent or parent in path.parents
