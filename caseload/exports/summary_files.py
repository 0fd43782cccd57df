"""One computed summary, written in the format asked for: one file, or a folder of CSV files."""

from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import ExitStack, contextmanager, suppress
from dataclasses import replace
from pathlib import Path

from caseload.application.safe_file import check_target, check_targets, os_failure, staged
from caseload.application.week.figures import WeeklySummary
from caseload.application.weekly_summary import FOLDER_FORMATS
from caseload.exports.summary_csv import csv_files
from caseload.exports.summary_html import write_html
from caseload.exports.summary_json import write_json
from caseload.exports.summary_xlsx import write_xlsx

WRITERS: dict[str, Callable[[WeeklySummary, Path], None]] = {
    "xlsx": write_xlsx,
    "html": write_html,
    "json": write_json,
}


def output_files(summary: WeeklySummary, fmt: str, out: Path) -> list[tuple[Path, Callable[[Path], None]]]:
    """Each file the export writes, with the function that writes its content to a given path."""
    if fmt in FOLDER_FORMATS:
        return [(out / name, write) for name, write in csv_files(summary)]
    return [(out, lambda path: WRITERS[fmt](summary, path))]


def earlier_files(summary: WeeklySummary, out: Path) -> list[Path]:
    """The files an earlier CSV export of this tool may have left in the folder `out` that this one
    does not write: with names and free text, an identified export has files (the reasons given)
    that a de-identified one leaves out, and a folder replaced with --force must hold the new export
    alone, never a mix of the two."""
    written = {name for name, _ in csv_files(summary)}
    every = {name for name, _ in csv_files(replace(summary, deidentified=False))}  # the names only
    return sorted(out / name for name in every - written)


@contextmanager
def _folder(out: Path) -> Iterator[None]:
    """The folder of a folder format, created owner-only when it is new, and removed again when
    the export fails: a refused export leaves nothing, not even an empty folder."""
    if out.is_dir():
        yield
        return
    try:
        out.mkdir(mode=0o700)
    except OSError as err:
        raise os_failure(err, f"creating the folder {out}") from None
    try:
        yield
    except BaseException:
        with suppress(OSError):  # empty by now: the staged files withdrew what they had published
            out.rmdir()
        raise


@contextmanager
def write(summary: WeeklySummary, fmt: str, out: Path, store: Path, force: bool) -> Iterator[Callable[[], None]]:
    """Render every file of the export through `safe_file` (never over the store, a backup or
    anything but a regular file; over an existing file only with `force`; each into a private
    temporary file beside it); the block gets the function that publishes them. Files published
    before the block fails are removed again. With `force`, a CSV folder is left holding exactly
    the new export's files: an earlier export's files that this one does not write are removed."""
    files = output_files(summary, fmt, out)
    folder = fmt in FOLDER_FORMATS
    earlier = earlier_files(summary, out) if folder else []
    if not folder:
        check_target(out, store, force)
    elif out.is_dir():  # a new folder holds nothing to check
        check_targets([*(path for path, _ in files), *earlier], store, force)
    with ExitStack() as stack:
        if folder:
            stack.enter_context(_folder(out))
        pending = [stack.enter_context(staged(path, render, force)) for path, render in files]

        def publish() -> None:
            for file in pending:
                file.publish()
            # Without `force` there were none (check_targets refused them): one that appeared since is
            # not this export's to remove.
            for path in earlier if force else ():
                try:
                    path.unlink(missing_ok=True)
                except OSError as err:
                    raise os_failure(err, f"removing the earlier export's {path}") from None

        yield publish
