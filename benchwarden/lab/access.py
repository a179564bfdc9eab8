"""What the connected role may do in the lab database: read it, write it, or grant itself more.

``lab serve`` shows the lab on a web page; it must run as a role that reads and writes nothing
(the viewer), never as a bench or the owner. The server answers from its own catalogue
(``has_table_privilege`` counts privileges held through group roles and ownership).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from benchwarden.lab.schema import BENCH_GROUP

__all__ = ["Access", "LAB_TABLES", "access"]

#: The lab's tables (schema migration 1, and the record of migrations).
LAB_TABLES = ("lab_events", "lab_snapshots", "lab_benches", "lab_migrations")
_READ = ("lab_events", "lab_snapshots", "lab_benches")


@dataclass(frozen=True)
class Access:
    """The connected role's rights in the lab: ``unreadable`` and ``writable`` name tables."""

    role: str
    missing: tuple[str, ...]
    unreadable: tuple[str, ...]
    writable: tuple[str, ...]
    powers: tuple[str, ...]

    @property
    def read_only(self) -> bool:
        """Reads every lab table, writes none and holds no power to change roles or skip policies."""
        return not (self.missing or self.unreadable or self.writable or self.powers)


def access(conn: Any) -> Access:
    """The rights of ``current_user`` on the lab's tables (tables that do not exist are ``missing``)."""
    role, sup, createrole, bypass = conn.execute(
        "SELECT current_user, r.rolsuper, r.rolcreaterole, r.rolbypassrls FROM pg_roles r"
        " WHERE r.rolname = current_user").fetchone()
    bench = conn.execute("SELECT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = %s)"
                         " AND pg_has_role(current_user, %s, 'MEMBER')", (BENCH_GROUP, BENCH_GROUP)).fetchone()[0]
    powers = tuple(name for name, held in (("superuser", sup), ("createrole", createrole), ("bypassrls", bypass),
                                           (f"member of {BENCH_GROUP}", bench)) if held)
    missing, unreadable, writable = [], [], []
    for t in LAB_TABLES:
        if conn.execute("SELECT to_regclass(%s) IS NULL", (t,)).fetchone()[0]:
            missing.append(t)
            continue
        can_read, can_write = conn.execute(
            "SELECT has_table_privilege(%s, 'SELECT'),"
            " has_table_privilege(%s, 'INSERT, UPDATE, DELETE, TRUNCATE, REFERENCES, TRIGGER')", (t, t)).fetchone()
        if t in _READ and not can_read:
            unreadable.append(t)
        if can_write:
            writable.append(t)
    return Access(str(role), tuple(missing), tuple(unreadable), tuple(writable), powers)
