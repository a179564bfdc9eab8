"""The lab database: a PostgreSQL server that receives every bench's events and snapshots.

Storage layer, beside the journal: :mod:`benchwarden.lab.schema` (versioned migrations, roles,
row-level security) and :mod:`benchwarden.lab.client` (connect, push, read). Passwords and
certificates come only from libpq's own sources (``PGPASSWORD``, ``~/.pgpass``, a service file,
``sslmode``/``sslrootcert`` in the URL).
"""
