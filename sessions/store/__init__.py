"""The session library: riders, boards, sessions, rides, conditions and feedback in a database.

Layers: :mod:`.schema` (tables), :mod:`.db` (URL, engine, migrations), :mod:`.library`
(the :class:`Library` API used by the command line, the dashboard and the comparison
engine), :mod:`.importer` (files, folders and zip archives to stored sessions),
:mod:`.export` (CSV and Parquet).
"""

from sessions.store.db import default_url, demo_url, mask_url, resolve_url
from sessions.store.library import RIDES_COLUMNS, SESSIONS_COLUMNS, Library

__all__ = ["Library", "RIDES_COLUMNS", "SESSIONS_COLUMNS", "default_url", "demo_url", "mask_url", "resolve_url"]
