"""The lab schema as numbered migrations, each applied in one transaction and recorded, and the
roles: ``benchwarden_bench`` (a group: each bench's login role is a member and may insert and read
only rows of its own ``bench_id``, by row-level security; no UPDATE or DELETE for anyone who
writes) and ``benchwarden_viewer`` (reads everything, writes nothing)."""

from __future__ import annotations

import re
from typing import Any

from benchwarden.errors import InputError

__all__ = ["MIGRATIONS", "BENCH_GROUP", "VIEWER", "bench_role", "migrate", "add_bench", "BENCH_ID"]

BENCH_GROUP = "benchwarden_bench"
VIEWER = "benchwarden_viewer"
#: A bench id: letters, digits, '-' and '_', up to 40 characters (it names a database role).
BENCH_ID = re.compile(r"[A-Za-z0-9][A-Za-z0-9_-]{0,39}")

_MINE = ("(bench_id = (SELECT b.bench_id FROM lab_benches b WHERE b.role_name = current_user))")

MIGRATIONS: dict[int, tuple[str, ...]] = {
    1: (
        "CREATE TABLE lab_benches (bench_id text PRIMARY KEY, role_name text NOT NULL UNIQUE,"
        " added_at timestamptz NOT NULL DEFAULT now())",
        # events keep the bench's own time (bench_at) and the server's receipt time (received_at)
        "CREATE TABLE lab_events (event_id uuid PRIMARY KEY, bench_id text NOT NULL, seq bigint NOT NULL,"
        " kind text NOT NULL, bench_at text, recorded_at text, received_at timestamptz NOT NULL DEFAULT now(),"
        " payload jsonb NOT NULL)",
        "CREATE INDEX lab_events_bench ON lab_events (bench_id, seq)",
        "CREATE INDEX lab_events_kind ON lab_events (kind, received_at)",
        "CREATE TABLE lab_snapshots (id bigserial PRIMARY KEY, bench_id text NOT NULL, taken_at timestamptz NOT NULL,"
        " received_at timestamptz NOT NULL DEFAULT now(), status jsonb NOT NULL, profile_text text,"
        " profile_sha256 text)",
        "CREATE INDEX lab_snapshots_bench ON lab_snapshots (bench_id, id DESC)",
        "ALTER TABLE lab_events ENABLE ROW LEVEL SECURITY",
        "ALTER TABLE lab_snapshots ENABLE ROW LEVEL SECURITY",
        f"GRANT SELECT ON lab_benches TO {BENCH_GROUP}, {VIEWER}",
        f"GRANT SELECT, INSERT ON lab_events, lab_snapshots TO {BENCH_GROUP}",
        f"GRANT USAGE ON SEQUENCE lab_snapshots_id_seq TO {BENCH_GROUP}",
        f"GRANT SELECT ON lab_events, lab_snapshots TO {VIEWER}",
        f"CREATE POLICY bench_inserts_events ON lab_events FOR INSERT TO {BENCH_GROUP} WITH CHECK {_MINE}",
        f"CREATE POLICY bench_reads_events ON lab_events FOR SELECT TO {BENCH_GROUP} USING {_MINE}",
        f"CREATE POLICY viewer_reads_events ON lab_events FOR SELECT TO {VIEWER} USING (true)",
        f"CREATE POLICY bench_inserts_snapshots ON lab_snapshots FOR INSERT TO {BENCH_GROUP} WITH CHECK {_MINE}",
        f"CREATE POLICY bench_reads_snapshots ON lab_snapshots FOR SELECT TO {BENCH_GROUP} USING {_MINE}",
        f"CREATE POLICY viewer_reads_snapshots ON lab_snapshots FOR SELECT TO {VIEWER} USING (true)",
    ),
}


def bench_role(bench_id: str) -> str:
    """The login role of a bench (``bw_bench_`` and its id, lower case, '-' as '_')."""
    if not BENCH_ID.fullmatch(bench_id):
        raise InputError(f"bench id {bench_id!r}: use letters, digits, '-' and '_' (at most 40), starting with a "
                         "letter or digit")
    return "bw_bench_" + bench_id.lower().replace("-", "_")


def _role_exists(cur: Any, name: str) -> bool:
    cur.execute("SELECT 1 FROM pg_roles WHERE rolname = %s", (name,))
    return cur.fetchone() is not None


def migrate(conn: Any) -> list[str]:
    """Create or migrate the lab schema and its two group roles; idempotent. Returns what it did."""
    from psycopg import sql

    done: list[str] = []
    with conn.transaction():
        cur = conn.cursor()
        for role, login in ((BENCH_GROUP, False), (VIEWER, True)):
            if not _role_exists(cur, role):
                cur.execute(sql.SQL("CREATE ROLE {} " + ("LOGIN" if login else "NOLOGIN")).format(sql.Identifier(role)))
                done.append(f"created role {role}")
        cur.execute("CREATE TABLE IF NOT EXISTS lab_migrations (version int PRIMARY KEY,"
                    " applied_at timestamptz NOT NULL DEFAULT now())")
        cur.execute("SELECT version FROM lab_migrations")
        have = {r[0] for r in cur.fetchall()}
    for v in sorted(MIGRATIONS):
        if v in have:
            continue
        with conn.transaction():
            cur = conn.cursor()
            for stmt in MIGRATIONS[v]:
                cur.execute(stmt)
            cur.execute("INSERT INTO lab_migrations(version) VALUES (%s)", (v,))
        done.append(f"applied migration {v}")
    return done


def add_bench(conn: Any, bench_id: str) -> list[str]:
    """Create a bench's login role (a member of the bench group) and register it; idempotent."""
    from psycopg import sql

    role = bench_role(bench_id)
    done: list[str] = []
    with conn.transaction():
        cur = conn.cursor()
        if not _role_exists(cur, role):
            cur.execute(sql.SQL("CREATE ROLE {} LOGIN IN ROLE {}").format(sql.Identifier(role),
                                                                         sql.Identifier(BENCH_GROUP)))
            done.append(f"created role {role} for bench {bench_id}")
        cur.execute("INSERT INTO lab_benches(bench_id, role_name) VALUES (%s, %s) ON CONFLICT (bench_id) DO NOTHING",
                    (bench_id, role))
        if cur.rowcount:
            done.append(f"registered bench {bench_id}")
    return done
