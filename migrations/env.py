"""Alembic environment for selector.

Two ways in:
- the program (selector.store.db._migrate) builds a file-less Config and passes an open connection
  in ``config.attributes["connection"]`` (foreign keys already OFF, transaction handled there);
- developers run the alembic command from the repository root (``[tool.alembic]`` in
  pyproject.toml); the database then comes from ``-x url=...``, else ``$SELECTOR_DB``, else the
  default file (see DEVELOPERS.md, "how to add a migration").
"""

from __future__ import annotations

import logging
import os
from logging.config import fileConfig

from alembic import context

from selector.store.tables import metadata

config = context.config
if config.config_file_name and os.path.exists(config.config_file_name):
    fileConfig(config.config_file_name)
elif config.cmd_opts is not None:  # alembic command without an ini file: still show progress
    logging.basicConfig(format="%(levelname)-5.5s [%(name)s] %(message)s")
    logging.getLogger("alembic").setLevel(logging.INFO)

target_metadata = metadata  # the Core tables: the one declaration of the schema (models map onto them)


def _url() -> str:
    x = context.get_x_argument(as_dictionary=True)
    if "url" in x:
        return x["url"]
    if config.file_config.has_option(config.config_ini_section, "sqlalchemy.url"):
        return config.get_main_option("sqlalchemy.url")
    from selector.store.db import resolve_url

    return resolve_url(None)


def _configure(connection) -> None:
    sqlite = connection.dialect.name == "sqlite"
    context.configure(
        connection=connection,
        target_metadata=target_metadata,
        render_as_batch=sqlite,
        compare_type=True,
        # Our SQLite connections run with isolation_level None and an explicit BEGIN IMMEDIATE, so
        # DDL is transactional: the whole upgrade (and the foreign-key check after it) commits or
        # rolls back as one unit. Without this alembic commits on its own after the last step.
        transactional_ddl=True if sqlite else None,
    )


def run_migrations_offline() -> None:
    context.configure(url=_url(), target_metadata=target_metadata, literal_binds=True,
                      render_as_batch=True)
    with context.begin_transaction():
        context.run_migrations()


def run_migrations_online() -> None:
    connection = config.attributes.get("connection")
    if connection is not None:
        _configure(connection)
        with context.begin_transaction():
            context.run_migrations()
        return
    # Developer use: an engine with foreign keys OFF (a batch rebuild with FKs on would cascade).
    from sqlalchemy.engine import make_url

    from selector.store.db import make_engine

    engine = make_engine(make_url(_url()), foreign_keys=False, pooled=False)
    try:
        with engine.connect() as conn:
            _configure(conn)
            with context.begin_transaction():
                context.run_migrations()
            conn.commit()
    finally:
        engine.dispose()


if context.is_offline_mode():
    run_migrations_offline()
else:
    run_migrations_online()
