"""Export the library's query frames (rides, sessions) to CSV or Parquet.

Files are written to a temporary name beside the target and renamed into place, so a
failed export never leaves a half-written file. Times are ISO-8601 UTC in CSV and
``timestamp[ns, tz=UTC]`` in Parquet; missing values are empty (CSV) or null (Parquet).
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import pandas as pd

from sessions.errors import LibraryInputError, StoreError

FORMATS = ("csv", "parquet")
TABLES = ("rides", "sessions")


def format_for(path: str | os.PathLike, fmt: str | None = None) -> str:
    """The export format: *fmt* if given, else from the file suffix (.csv, .parquet/.pq)."""
    if fmt:
        if fmt not in FORMATS:
            raise LibraryInputError(f"export format {fmt!r}: use one of {', '.join(FORMATS)}")
        return fmt
    suffix = Path(path).suffix.lower()
    if suffix == ".csv":
        return "csv"
    if suffix in (".parquet", ".pq"):
        return "parquet"
    raise LibraryInputError(f"cannot tell the format of {Path(path).name!r}: name it .csv or .parquet, or give --format")


def write_frame(frame: pd.DataFrame, path: str | os.PathLike, fmt: str | None = None) -> Path:
    """Write *frame* to *path* atomically in CSV or Parquet; returns the path."""
    path = Path(path)
    fmt = format_for(path, fmt)
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise LibraryInputError(f"folder {str(folder)!r} does not exist")
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=folder)
    os.close(fd)
    try:
        if fmt == "csv":
            out = frame.copy()
            for col in out.columns:
                if isinstance(out[col].dtype, pd.DatetimeTZDtype):
                    out[col] = out[col].map(lambda t: "" if pd.isna(t) else t.isoformat())
            out.to_csv(tmp, index=False, float_format="%.6g")
        else:
            frame.to_parquet(tmp, index=False, engine="pyarrow")
        os.replace(tmp, path)
    except OSError as exc:
        raise StoreError(f"cannot write {path.name}: {exc.strerror or exc}") from exc
    finally:
        if os.path.exists(tmp):
            os.unlink(tmp)
    return path


def export_table(library, table: str, path: str | os.PathLike, fmt: str | None = None, **filters) -> int:
    """Export ``rides`` or ``sessions`` (filters as :meth:`Library.rides_frame`); returns the row count."""
    if table not in TABLES:
        raise LibraryInputError(f"export table {table!r}: use one of {', '.join(TABLES)}")
    frame = library.rides_frame(**filters) if table == "rides" else library.sessions_frame(**filters)
    write_frame(frame, path, fmt)
    return len(frame)
