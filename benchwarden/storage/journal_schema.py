"""The journal's schema: its version, its application id and the migrations that bring an older
file forward (one per ``user_version``: SQL, or statements run in turn), kept apart from the code
that opens and writes it."""

from __future__ import annotations

from benchwarden.storage.events import EVENT_MIGRATION, SAMPLES_LAST_MIGRATION, event_trigger

SCHEMA_VERSION = 10
#: ``PRAGMA application_id`` of a benchwarden journal ("GSBJ"): a foreign SQLite file is refused.
APPLICATION_ID = 0x4753424A

_MIGRATIONS: dict[int, str | tuple[str, ...]] = {
    1: """
    CREATE TABLE sessions (
        id INTEGER PRIMARY KEY,
        bench TEXT NOT NULL,
        profile_path TEXT,
        started_at TEXT NOT NULL,
        stopped_at TEXT
    );
    CREATE TABLE readings (
        id INTEGER PRIMARY KEY,
        session_id INTEGER NOT NULL REFERENCES sessions(id),
        supply_id TEXT NOT NULL,
        at TEXT NOT NULL,
        pressure_abs_pa REAL NOT NULL,
        pressure_text TEXT NOT NULL,
        temperature_k REAL NOT NULL,
        entered_at TEXT NOT NULL
    );
    CREATE INDEX readings_session ON readings(session_id, at);
    CREATE TABLE notes (
        id INTEGER PRIMARY KEY,
        session_id INTEGER NOT NULL REFERENCES sessions(id),
        at TEXT NOT NULL,
        text TEXT NOT NULL
    );
    """,
    2: """
    CREATE TABLE hold_tests (
        id INTEGER PRIMARY KEY,
        at TEXT NOT NULL,
        bench TEXT,
        supply_id TEXT,
        gas TEXT NOT NULL,
        volume_m3 REAL NOT NULL,
        duration_s REAL NOT NULL,
        verdict TEXT NOT NULL,
        leak_rate_sccm REAL NOT NULL,
        leak_rate_uncertainty_sccm REAL NOT NULL,
        details TEXT
    );
    """,
    3: """
    CREATE TABLE readings_v3 (
        id INTEGER PRIMARY KEY,
        session_id INTEGER REFERENCES sessions(id),
        bench TEXT,
        supply_id TEXT NOT NULL,
        at TEXT NOT NULL,
        pressure_abs_pa REAL,
        pressure_text TEXT NOT NULL,
        temperature_k REAL NOT NULL,
        entered_at TEXT NOT NULL,
        weight_kg REAL,
        ambient_pa REAL,
        struck_at TEXT,
        struck_reason TEXT
    );
    INSERT INTO readings_v3(id, session_id, bench, supply_id, at, pressure_abs_pa, pressure_text, temperature_k,
                            entered_at)
        SELECT r.id, r.session_id, s.bench, r.supply_id, r.at, r.pressure_abs_pa, r.pressure_text, r.temperature_k,
               r.entered_at FROM readings r LEFT JOIN sessions s ON s.id = r.session_id;
    DROP INDEX readings_session;
    DROP TABLE readings;
    ALTER TABLE readings_v3 RENAME TO readings;
    CREATE INDEX readings_session ON readings(session_id, at);
    CREATE INDEX readings_supply ON readings(bench, supply_id, at);
    CREATE TABLE changes (
        id INTEGER PRIMARY KEY,
        bench TEXT NOT NULL,
        supply_id TEXT NOT NULL,
        at TEXT NOT NULL,
        pressure_abs_pa REAL,
        pressure_text TEXT,
        weight_kg REAL,
        temperature_k REAL,
        label TEXT,
        retest_due TEXT,
        entered_at TEXT NOT NULL
    );
    CREATE INDEX changes_supply ON changes(bench, supply_id, at);
    ALTER TABLE sessions ADD COLUMN operator TEXT;
    ALTER TABLE sessions ADD COLUMN shots INTEGER;
    ALTER TABLE hold_tests ADD COLUMN kind TEXT;
    """,
    4: """
    CREATE TABLE streams (
        id INTEGER PRIMARY KEY,
        bench TEXT NOT NULL,
        supply_id TEXT NOT NULL,
        quantity TEXT NOT NULL,
        tolerance REAL NOT NULL,
        UNIQUE (bench, supply_id, quantity)
    );
    CREATE TABLE samples (
        stream INTEGER NOT NULL,
        t REAL NOT NULL,
        value REAL,
        PRIMARY KEY (stream, t)
    ) WITHOUT ROWID;
    CREATE TABLE sample_blocks (
        stream INTEGER NOT NULL,
        t0 REAL NOT NULL,
        t1 REAL NOT NULL,
        n INTEGER NOT NULL,
        bad INTEGER NOT NULL,
        vmin REAL,
        vmax REAL,
        tolerance REAL NOT NULL,
        points BLOB NOT NULL,
        PRIMARY KEY (stream, t0)
    ) WITHOUT ROWID;
    CREATE TABLE alarms (
        id INTEGER PRIMARY KEY,
        bench TEXT NOT NULL,
        supply_id TEXT,
        code TEXT NOT NULL,
        at TEXT NOT NULL,
        text TEXT NOT NULL,
        details TEXT
    );
    CREATE INDEX alarms_bench ON alarms(bench, at);
    """,
    5: """
    CREATE TABLE accepted_stops (
        id INTEGER PRIMARY KEY,
        session_id INTEGER NOT NULL REFERENCES sessions(id),
        at TEXT NOT NULL,
        operator TEXT,
        code TEXT NOT NULL,
        subject TEXT NOT NULL,
        text TEXT NOT NULL,
        reason TEXT NOT NULL
    );
    CREATE INDEX accepted_stops_session ON accepted_stops(session_id);
    ALTER TABLE readings ADD COLUMN note TEXT;
    CREATE INDEX readings_struck ON readings(bench, supply_id) WHERE struck_at IS NOT NULL;
    CREATE INDEX sessions_bench ON sessions(bench, started_at);
    CREATE TABLE marks (
        bench TEXT NOT NULL,
        supply_id TEXT NOT NULL,
        what TEXT NOT NULL,
        reading_id INTEGER NOT NULL,
        at TEXT NOT NULL,
        PRIMARY KEY (bench, supply_id, what)
    );
    """,
    6: """
    ALTER TABLE samples ADD COLUMN status TEXT;
    ALTER TABLE samples ADD COLUMN reason TEXT;
    """,
    7: EVENT_MIGRATION,
    # purges run and hold tests started to finish later, each also an event (issue 29)
    8: (
        "CREATE TABLE purges (id INTEGER PRIMARY KEY, bench TEXT NOT NULL, supply_id TEXT NOT NULL,"
        " at TEXT NOT NULL, operator TEXT, method TEXT NOT NULL, cycles INTEGER,"
        " gas_standard_litres REAL NOT NULL, details TEXT, entered_at TEXT NOT NULL)",
        "CREATE INDEX purges_supply ON purges(bench, supply_id, at)",
        "CREATE TABLE hold_starts (id INTEGER PRIMARY KEY, bench TEXT NOT NULL, supply_id TEXT NOT NULL,"
        " at TEXT NOT NULL, pressure_abs_pa REAL NOT NULL, pressure_text TEXT NOT NULL,"
        " temperature_k REAL NOT NULL, ambient_pa REAL NOT NULL, hold_s REAL NOT NULL, entered_at TEXT NOT NULL)",
        "CREATE INDEX hold_starts_supply ON hold_starts(bench, supply_id, at)",
        "ALTER TABLE hold_tests ADD COLUMN start_id INTEGER REFERENCES hold_starts(id)",
        event_trigger("purge", "purges", "INSERT", "NEW.bench", "NEW.at",
                      "json_object('purge_id', NEW.id, 'supply_id', NEW.supply_id, 'operator', NEW.operator,"
                      " 'method', NEW.method, 'cycles', NEW.cycles, 'gas_standard_litres', NEW.gas_standard_litres,"
                      " 'details', json(COALESCE(NULLIF(NEW.details, ''), '{}')))"),
        event_trigger("hold-start", "hold_starts", "INSERT", "NEW.bench", "NEW.at",
                      "json_object('hold_start_id', NEW.id, 'supply_id', NEW.supply_id, 'pressure_abs_pa',"
                      " NEW.pressure_abs_pa, 'pressure_text', NEW.pressure_text, 'temperature_k', NEW.temperature_k,"
                      " 'ambient_pa', NEW.ambient_pa, 'hold_s', NEW.hold_s)"),
    ),
    # an hour of live samples keeps its last value, and its lab event says it (issue 30)
    9: SAMPLES_LAST_MIGRATION,
    # figures derived from the record, kept with a key of what they were computed from, so that a
    # status recomputes only what changed (issue 28)
    10: ("CREATE TABLE derived (bench TEXT NOT NULL, supply_id TEXT NOT NULL, what TEXT NOT NULL,"
         " key TEXT NOT NULL, value TEXT NOT NULL, PRIMARY KEY (bench, supply_id, what))",),
}
