"""Alembic environment of the session library.

floatlift passes an open connection in ``config.attributes["connection"]``; for the
``alembic`` command line the URL comes from ``-x db=URL``, ``$FLOATLIFT_DB`` or the
embedded default.
"""

from __future__ import annotations

from alembic import context

from sessions.store.db import PG_MIGRATION_LOCK, make_engine
from sessions.store.schema import Base

config = context.config
target_metadata = Base.metadata


def _run(connection) -> None:
    context.configure(
        connection=connection,
        target_metadata=target_metadata,
        render_as_batch=connection.dialect.name == "sqlite",
        compare_type=True,
    )
    with context.begin_transaction():
        if connection.dialect.name == "postgresql":
            # Two processes opening a fresh team library at once: the second waits here.
            connection.exec_driver_sql(f"SELECT pg_advisory_xact_lock({PG_MIGRATION_LOCK})")
        context.run_migrations()


def run_migrations_online() -> None:
    connection = config.attributes.get("connection")
    if connection is not None:
        _run(connection)
        return
    url = context.get_x_argument(as_dictionary=True).get("db")
    engine = make_engine(url)
    with engine.begin() as conn:
        _run(conn)
    engine.dispose()


if context.is_offline_mode():  # pragma: no cover
    raise SystemExit("floatlift's migrations run online only (they need a connection)")
run_migrations_online()
