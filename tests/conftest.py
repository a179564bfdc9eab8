"""Shared test settings.

* hypothesis runs derandomized so CI is repeatable (seeded examples);
* no test ever touches the user's real journal: $GASBENCH_JOURNAL points at a temp file.
"""

import pytest
from hypothesis import settings

settings.register_profile("gasbench", derandomize=True, print_blob=True)
settings.load_profile("gasbench")


@pytest.fixture(autouse=True)
def _isolated_journal(tmp_path, monkeypatch):
    monkeypatch.setenv("GASBENCH_JOURNAL", str(tmp_path / "isolated-journal.sqlite3"))
