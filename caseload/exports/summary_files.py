"""One computed summary, written in the format asked for: one file, or a folder of CSV files."""

from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import ExitStack, contextmanager
from pathlib import Path

from caseload.application.week.figures import WeeklySummary
from caseload.application.weekly_summary import FOLDER_FORMATS
from caseload.exports.safe_file import check_targets, os_failure, staged
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


def _folder(out: Path) -> None:
    """The folder of a folder format, created owner-only when it is new."""
    try:
        out.mkdir(mode=0o700, exist_ok=True)
    except OSError as err:
        raise os_failure(err, f"creating the folder {out}") from None


@contextmanager
def write(summary: WeeklySummary, fmt: str, out: Path, store: Path, force: bool) -> Iterator[Callable[[], None]]:
    """Render every file of the export through `safe_file` (never over the store or a backup, over an
    existing file only with `force`, each into a private temporary file beside it); the block gets
    the function that publishes them. Files published before the block fails are removed again."""
    files = output_files(summary, fmt, out)
    check_targets((path for path, _ in files), store, force)
    if fmt in FOLDER_FORMATS:
        _folder(out)
    published: list[Path] = []
    with ExitStack() as stack:
        pending = [stack.enter_context(staged(path, render, force)) for path, render in files]

        def publish() -> None:
            for file in pending:
                file.publish()
                published.append(file.target)

        try:
            yield publish
        except BaseException:
            for path in published:
                path.unlink(missing_ok=True)
            raise
