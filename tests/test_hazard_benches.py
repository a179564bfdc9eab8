"""Issue 25 on whole benches, through ``plan --json`` (finding codes and severities), the
checklist and the app: a hydrogen-fed spark gap beside oxygen and argon cylinders, the premix
bench with its cylinder inside or outside, the monitor that detects but does not prevent, and
the ``room`` tool's finite source (issue 24 item 9). Figures are checked against closed forms
(displacement model, BCGA GN11) named beside each check."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from benchwarden.cli import main
from benchwarden.core import gas as g

ROOT = Path(__file__).resolve().parents[1]
PREMIX = (ROOT / "profiles" / "premix-switch-bench.toml").read_text()

#: The safety specialist's own bench (issue 25): 3 slpm of hydrogen to a spark gap venting into a
#: 30 m³ room, an oxygen and an argon cylinder beside it. Invented figures.
HYDROGEN = """
[bench]
name = "Test: hydrogen-fed spark gap"

[ambient]
temperature = "20 degC"

[session]
duration = "4 h"
repetition_rate = "10 Hz"

[room]
volume = "30 m3"
{ventilation}
oxygen_monitor = {monitor}

[[supplies]]
id = "h2"
gas = "hydrogen"
water_volume = "10 L"
service_pressure = "200 bar"
reading = "150 bar"
reserve = "10 bar"

[[supplies]]
id = "o2"
gas = "oxygen"
water_volume = "{o2_volume}"
service_pressure = "200 bar"
reading = "180 bar"
reserve = "10 bar"

[[supplies]]
id = "ar"
gas = "argon"
water_volume = "{ar_volume}"
service_pressure = "200 bar"
reading = "100 bar"
reserve = "10 bar"

[[regulators]]
id = "reg-h2"
supply = "h2"
stages = 2
inlet_rating = "230 bar"
outlet_max = "10 bar"
set_point = "3 bar"
supply_pressure_effect = 0.02

[[draws]]
id = "gap"
kind = "gap"
regulator = "reg-h2"
flow = "3 slpm"
spacing = "2 mm"
vents_to_room = true
"""


def _bench(tmp_path: Path, ventilation: str = 'ventilation = "1/h"', monitor: str = "false",
           o2_volume: str = "50 L", ar_volume: str = "50 L") -> Path:
    p = tmp_path / "h2.toml"
    p.write_text(HYDROGEN.format(ventilation=ventilation, monitor=monitor, o2_volume=o2_volume, ar_volume=ar_volume))
    return p


def _plan(capsys, path: Path) -> dict:
    capsys.readouterr()
    assert main(["plan", str(path), "--json"]) == 0
    return json.loads(capsys.readouterr().out)


def _by_code(plan: dict) -> dict[str, dict]:
    return {f["code"]: f for f in plan["findings"]}


def _full_volume(gas: str, litres: float, T: float, amb: float) -> float:
    """Free gas [m³ at the room] of a cylinder full at 200 bar(g) and 15 °C (CoolProp HEOS)."""
    gs = g.parse_gas(gas)
    return g.density(gs, 288.15, 200e5 + amb) * litres / 1e3 / g.density(gs, T, amb)


def test_fuel_at_a_spark_is_judged_for_flammability(tmp_path, capsys):
    plan = _plan(capsys, _bench(tmp_path))
    f = _by_code(plan)
    # the gap fed with hydrogen: a warning with its LFL (4 %, IEC 60079-20-1)
    assert f["gap-fuel"]["severity"] == "warning" and f["gap-fuel"]["values"]["lfl_percent"] == 4.0
    # the full hydrogen cylinder released: about 1.8 m³ in 30 m³ = 6 % > LFL → stop, with the figures
    fl = f["room-flammable"]
    assert fl["severity"] == "stop" and fl["values"]["supply"] == "h2"
    amb = plan["ambient_pa"]
    vg = _full_volume("hydrogen", 10, 293.15, amb)
    assert fl["values"]["percent"] == pytest.approx(100 * vg / 30.0, rel=1e-6)   # displacement, BCGA GN11
    assert fl["values"]["percent_of_lfl"] == pytest.approx(100 * vg / 30.0 / 4.0 * 100, rel=1e-6)
    assert fl["values"]["lfl_percent"] == 4.0
    # oxidiser and fuel in one room (29 CFR 1910.253(b)(4)(iii), from memory)
    assert f["segregation"]["severity"] == "warning"
    # the oxygen cylinder enriches the room: (C0·(Vr − Vg) + 100·Vg)/Vr
    vo = _full_volume("oxygen", 50, 293.15, amb)
    en = f["room-enrichment"]
    assert en["severity"] == "stop" and en["values"]["supply"] == "o2"
    assert en["values"]["o2_percent"] == pytest.approx((20.95 * (30 - vo) + 100 * vo) / 30, rel=1e-6)
    # the argon cylinder is the oxygen-deficiency case, labelled with its own cylinder
    assert f["room-release"]["values"]["supply"] == "ar"
    # every room finding names its supply
    for x in plan["findings"]:
        if x["subject"] == "room":
            assert x["values"].get("supply"), x
    # 3 slpm with one air change an hour stays below 25 % of the LFL: no vented-flammable stop
    assert "room-vented-flammable" not in f


def test_vented_fuel_without_ventilation_is_a_stop(tmp_path, capsys):
    f = _by_code(_plan(capsys, _bench(tmp_path, ventilation="")))
    v = f["room-vented-flammable"]
    # no ventilation: C_gas(t) = 1 − exp(−R·t/V) of the room after the 4 h session (closed form)
    assert v["severity"] == "stop" and v["values"]["supply"] == "h2"
    assert v["values"]["percent_of_lfl"] > 25.0 and {"lfl_percent", "percent_of_lfl"} <= set(v["values"])


def test_a_monitor_does_not_turn_a_deep_release_into_a_warning(tmp_path, capsys):
    # argon full (50 L) into 30 m³: about 13 % O2 — below 16 % (CGA SB-2, from memory) a stop
    # whether or not a monitor is fitted
    for monitor in ("false", "true"):
        f = _by_code(_plan(capsys, _bench(tmp_path, monitor=monitor, o2_volume="1 L")))
        assert f["room-release"]["severity"] == "stop"
        assert f["room-release"]["values"]["o2_percent"] < 16.0
    # a 25 L argon cylinder: about 17 % — a stop without a monitor, a warning with one
    for monitor, sev in (("false", "stop"), ("true", "warning")):
        f = _by_code(_plan(capsys, _bench(tmp_path, monitor=monitor, o2_volume="1 L", ar_volume="25 L")))
        assert 16.0 < f["room-release"]["values"]["o2_percent"] < 18.0
        assert f["room-release"]["severity"] == sev


def test_premix_bench_every_cylinder_judged_for_every_hazard(tmp_path, capsys):
    # issue 25 item 2, with the premix cylinder in the room: its full 9.2 m³ take the 32 m³ room
    # to about 14.9 % O2 and 2.3 % CO2 — the worst case, labelled premix, not SF6
    inside = tmp_path / "inside.toml"
    inside.write_text(PREMIX.replace('location = "outside"\n', ""))
    plan = _plan(capsys, inside)
    f = _by_code(plan)
    rel = f["room-release"]
    assert rel["values"]["supply"] == "premix" and rel["severity"] == "stop"
    assert rel["values"]["o2_percent"] == pytest.approx(14.9, abs=0.1)
    assert rel["values"]["o2_percent_today"] == pytest.approx(17.3, abs=0.1)
    assert rel["values"]["co2_detector"] is True and "CO2 detector" in rel["text"]
    cases = {c["supply"]: c for c in plan["room"]["cases"]}
    assert cases["premix"]["toxic"]["percent"] == pytest.approx(2.3, abs=0.05)
    assert cases["premix"]["toxic"]["band"] == "above-twa"
    # a weighed cylinder's "full" is its fill: SF6 gross 27.9 kg − tare 18.4 kg
    assert cases["sf6"]["full_mass_kg"] == pytest.approx(9.5)
    # SF6 released is not judged on its 8-hour average: no toxic finding; its pooling is
    assert "room-toxic" not in f
    pool = f["room-pooling"]
    assert pool["values"]["supply"] == "sf6"
    # floor layer: 1 m of a 2.5 m room (assumption), displacement: C0·(1 − Vg/(Vr·0.4))
    vg = cases["sf6"]["release"]["release_volume_m3"]
    assert pool["values"]["o2_percent_floor"] == pytest.approx(20.95 * (1 - vg / (32 * 0.4)), rel=1e-9)


def test_bundled_premix_bench_keeps_its_cylinder_outside(capsys):
    plan = _plan(capsys, ROOT / "profiles" / "premix-switch-bench.toml")
    assert [c["supply"] for c in plan["room"]["cases"]] == ["sf6"]
    assert plan["room"]["outside"] == ["premix"]
    codes = {(x["code"], x["severity"]) for x in plan["findings"]}
    assert ("room-pooling", "warning") in codes and ("no-hold-test", "warning") in codes
    assert not any(c == "room-release" for c, _ in codes)
    # its draws still vent where they vent: the premix channel is in the vented figure
    assert plan["room"]["vented_by_supply"].keys() == {"premix"}
    # its CO2 in the room: exhaust-driven steady state, gas fraction R/Q (well mixed; the 3 h
    # session is 8.4 air changes, e^-8.4 from steady) × 8 % CO2 — below its 8-hour limit
    v = plan["room"]["vented"][0]
    r_q = plan["room"]["vented_m3_s"] / plan["room"]["ventilation_m3_s"]
    assert v["gas_percent"] == pytest.approx(100 * r_q, rel=1e-3)
    assert v["toxic"]["percent"] == pytest.approx(8 * r_q, rel=1e-3) and v["toxic"]["band"] == "below-twa"


def test_checklist_of_the_hydrogen_bench(tmp_path, capsys):
    path = _bench(tmp_path)
    capsys.readouterr()
    assert main(["checklist", str(path), "--format", "json"]) == 0
    cl = json.loads(capsys.readouterr().out)
    items = {it["id"]: it for s in cl["sections"] for it in s["items"]}
    assert items["room-flammable"]["status"] == "stop" and "h2" in items["room-flammable"]["text"]
    assert items["segregation"]["status"] == "warning"
    assert "purge the air out" in items["after-change"]["figure"]
    assert "h2" in items["after-change"]["figure"]
    for key in ("back-off", "shut-down", "relief-vents", "regulator-service:reg-h2", "protection", "door-signs",
                "alarm-response", "oxygen-monitor"):
        assert key in items, key
    # every item says where its practice comes from (a named source or common practice)
    for it in items.values():
        if it["id"] != "open-findings":
            assert it["basis"], it["id"]
    assert "sensor high for h2" in items["oxygen-monitor"]["figure"]
    assert "sensor low for ar" in items["oxygen-monitor"]["figure"]
    assert "flammable" in items["door-signs"]["figure"] and "oxidising" in items["door-signs"]["figure"]


async def test_app_shows_the_flammable_stop(tmp_path):
    from benchwarden.storage.journal import Journal
    from benchwarden.tui.app import make_app
    from benchwarden.tui.widgets import FindingsPanel

    journal = tmp_path / "journal.sqlite3"
    Journal(journal).close()
    app = make_app(_bench(tmp_path), journal)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause()
        panel = app.screen.query_one("#findings", FindingsPanel)
        shown = {(f.code, f.severity) for f in panel.shown}
    assert {("room-flammable", "stop"), ("room-enrichment", "stop"), ("gap-fuel", "warning")} <= shown


def test_room_tool_finite_source_leads_with_the_lowest_oxygen(capsys):
    argv = ["room", "--gas", "nitrogen", "--room-volume", "30 m3", "--leak", "1e6 slpm", "--ventilation", "1/h",
            "--supply-volume", "50 L", "--supply-pressure", "200 bar"]
    capsys.readouterr()
    assert main([*argv, "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["steady_state_sustained"] is False
    assert d["o2_percent_lowest"] == pytest.approx(15.3, abs=0.05)
    assert "coma" not in d["effect"] and "hazardous" in d["effect"]
    assert main(argv) == 0
    text = capsys.readouterr().out
    assert text.index("lowest oxygen") < text.index("steady oxygen")
    assert "0.00 %" not in text and "coma" not in text


def test_room_tool_bands_co2_and_leads_with_toxicity(capsys):
    capsys.readouterr()
    assert main(["room", "--gas", "co2", "--room-volume", "30 m3", "--release", "7 kg", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["lead"] == "toxic" and d["hazards"][0]["band"] == "incapacitating"
    assert main(["room", "--gas", "co2", "--room-volume", "30 m3", "--release", "7 kg"]) == 0
    text = capsys.readouterr().out
    assert text.index("TOXIC") < text.index("oxygen after")


CO2_BENCH = """
[bench]
name = "Test: a CO2 cylinder in a small room"
[session]
duration = "2 h"
[room]
volume = "30 m3"
oxygen_monitor = true
[[supplies]]
id = "co2"
gas = "co2"
water_volume = "10 L"
service_pressure = "60 bar"
gross = "25 kg"
tare = "18 kg"
reserve = "5 bar"
retest_due = 2000-01-01
"""


def test_co2_bench_toxicity_leads_in_plan_and_checklist(tmp_path, capsys):
    # issue 24 item 4 on a bench: 7 kg of CO2 (its fill, gross − tare) in 30 m³ — 12.7 % CO2,
    # incapacitating, worse than the 18.3 % O2 it leaves; the monitor does not detect CO2.
    path = tmp_path / "co2.toml"
    path.write_text(CO2_BENCH)
    plan = _plan(capsys, path)
    f = _by_code(plan)
    tox = f["room-toxic"]
    assert tox["severity"] == "stop" and tox["values"]["band"] == "incapacitating"
    assert tox["values"]["supply"] == "co2" and tox["values"]["lead"] == "toxic"
    assert "CO2 detector" in tox["text"]
    # the toxic finding comes before the oxygen one, and the oxygen one says so
    codes = [x["code"] for x in plan["findings"]]
    assert codes.index("room-toxic") < codes.index("room-release")
    assert f["room-release"]["values"]["lead"] == "toxic"
    # a cylinder past its periodic test: do not use or refill it — a stop (issue 25 item 6)
    assert f["retest-overdue"]["severity"] == "stop"
    assert main(["checklist", str(path), "--format", "json"]) == 0
    items = {it["id"]: it for s in json.loads(capsys.readouterr().out)["sections"] for it in s["items"]}
    assert items["room-toxic"]["status"] == "stop" and "incapacitating" in items["room-toxic"]["figure"]
    assert "a CO2 detector for co2" in items["oxygen-monitor"]["figure"]
    assert "cold-burn gloves for co2" in items["protection"]["figure"]


def test_checklist_cautions_are_built_for_the_premix_as_it_is(capsys):
    capsys.readouterr()
    assert main(["checklist", str(ROOT / "profiles" / "premix-switch-bench.toml"), "--format", "json"]) == 0
    cautions = {c["topic"]: c["text"] for c in json.loads(capsys.readouterr().out)["cautions"]}
    premix = cautions[g.parse_gas("helium:0.78,nitrogen:0.14,carbon dioxide:0.08").name]
    assert "liquefied" not in premix and "floor level" not in premix
    sf6 = cautions["sulfur hexafluoride"]
    assert "filtered vacuum" in sf6 and "dry ice" not in sf6


def test_leak_alarm_acts_only_where_the_air_is_safe():
    from benchwarden.render.findings import describe
    from benchwarden.workflows.findings import alarm_findings

    f = alarm_findings({}, {}, 1.0, None, (), {}, {"n2-A": (40.0, 5.0)})[0]
    assert f.code == "alarm-leak" and "only where the air is safe" in describe(f)[0]


async def test_app_room_screen_and_cautions_name_the_toxicity(tmp_path):
    from textual.widgets import Static

    from benchwarden.storage.journal import Journal
    from benchwarden.tui.app import make_app

    path = tmp_path / "co2.toml"
    path.write_text(CO2_BENCH)
    journal = tmp_path / "journal.sqlite3"
    Journal(journal).close()
    app = make_app(path, journal)
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause()
        await pilot.press("o")
        await pilot.pause()
        room_text = str(app.screen.query_one("#room-figures", Static).render())
        assert "co2 (7.00 kg" in room_text and "incapacitating" in room_text
        await pilot.press("escape")
        await pilot.pause()
        await pilot.press("c")
        await pilot.pause()
        text = " ".join(str(w.render()) for w in app.screen.query(Static))
        assert "breathlessness" in text and "dry ice" in text and "CO2 detector" in text


def test_room_tool_judges_an_sf6_release_on_what_fits_a_release(capsys):
    # issue 25 item 5: 9.5 kg of SF6 into 32 m³ — no "toxic" verdict on its 8-hour limit; its
    # floor layer (lowest 1 m of a room taken as 2.5 m high, an assumption) by displacement:
    # C = C0·(1 − Vg/(0.4·Vr)) (BCGA GN11 model on the layer)
    capsys.readouterr()
    assert main(["room", "--gas", "sf6", "--room-volume", "32 m3", "--release", "9.5 kg", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    tox = d["hazards"][0]
    assert tox["band"] == "above-twa" and tox["judged"] is False and tox["criterion"] == "short-term"
    assert d["lead"] == "oxygen"
    assert d["o2_percent_floor"] == pytest.approx(20.95 * (1 - d["release_volume_m3"] / (0.4 * 32)), rel=1e-9)
    assert main(["room", "--gas", "sf6", "--room-volume", "32 m3", "--release", "9.5 kg"]) == 0
    text = capsys.readouterr().out
    assert "TOXIC" not in text and "at floor level" in text
