"""Shared test settings.

* hypothesis runs derandomized so CI is repeatable (seeded examples);
* no test ever touches the user's real journal: $BENCHWARDEN_JOURNAL points at a temp file.
"""

import pytest
from hypothesis import settings

settings.register_profile("benchwarden", derandomize=True, print_blob=True)
settings.load_profile("benchwarden")


@pytest.fixture(autouse=True)
def _isolated_journal(tmp_path, monkeypatch):
    monkeypatch.setenv("BENCHWARDEN_JOURNAL", str(tmp_path / "isolated-journal.sqlite3"))


#: Interface tests (the app, the command line end to end, subprocesses, files on disk); the core
#: tier (`uv run pytest -m "not slow"`) runs without them in under a minute.
SLOW_MODULES = {"test_app", "test_app_life", "test_app_stops", "test_one_truth", "test_journal", "test_cli", "test_checklist",
                "test_bad_input", "test_hardening", "test_cylinder_life", "test_generated_bad_input",
                "test_around_session", "test_sources", "test_live", "test_hazard_benches"}


def pytest_collection_modifyitems(config, items):
    for item in items:
        module = item.path.stem
        if (module in SLOW_MODULES or "pr_flash" in getattr(item, "fixturenames", ())
                or "peng_robinson" in item.name):
            item.add_marker(pytest.mark.slow)


@pytest.fixture(scope="module")
def pr_flash():
    """An independent flash: Caleb Bell's ``thermo`` library with the Peng–Robinson (1976)
    equation of state and its own phase-equilibrium flash — a different equation of state in a
    different implementation, so agreement is expected within a few percent, not exactly."""
    thermo = pytest.importorskip("thermo")
    from thermo.interaction_parameters import IPDB

    def make(ids):
        constants, props = thermo.ChemicalConstantsPackage.from_IDs(ids)
        kw = dict(Tcs=constants.Tcs, Pcs=constants.Pcs, omegas=constants.omegas)
        if len(ids) > 1:
            kw["kijs"] = IPDB.get_ip_asymmetric_matrix("ChemSep PR", constants.CASs, "kij")
        gas = thermo.CEOSGas(thermo.PRMIX, kw, HeatCapacityGases=props.HeatCapacityGases)
        liq = thermo.CEOSLiquid(thermo.PRMIX, kw, HeatCapacityGases=props.HeatCapacityGases)
        if len(ids) > 1:
            return thermo.FlashVL(constants, props, liquid=liq, gas=gas)
        return thermo.FlashPureVLS(constants, props, gas=gas, liquids=[liq], solids=[])

    return make
