"""A STOP nobody can miss (issue 23): listed above the fold at 80×24, the status line says STOP,
a session starts over it only when a person accepts each STOP with a reason, recorded."""

from pathlib import Path

from apptools import Clock, burst, settle

from benchwarden.storage.journal import Journal
from benchwarden.tui.app import make_app
from benchwarden.tui.screens.accept import AcceptStopsScreen
from benchwarden.tui.screens.overview import OverviewScreen

ROOT = Path(__file__).resolve().parents[1]


def _uncontrolled(tmp_path: Path) -> Path:
    """The demo bench without its room controls: a full-cylinder release is a STOP."""
    text = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text()
    p = tmp_path / "uncontrolled.toml"
    p.write_text(text.replace("oxygen_monitor = true", "oxygen_monitor = false"))
    return p


async def test_stop_is_on_screen_at_80x24_and_the_status_line_says_stop(tmp_path):
    app = make_app(_uncontrolled(tmp_path), tmp_path / "j.sqlite", clock=Clock())
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(app, pilot)
        assert isinstance(app.screen, OverviewScreen)
        status = app.screen.query_one("#status")
        assert "STOP" in str(status.render()) and status.has_class("stop")
        box = app.screen.query_one("#stops")
        assert box.display and "room" in str(box.render())
        # inside the visible screen, without scrolling
        assert box.region.y + box.region.height <= 24 and box.region.height >= 1


async def test_a_session_over_a_stop_needs_a_name_and_a_reason_recorded(tmp_path):
    journal = tmp_path / "j.sqlite"
    app = make_app(_uncontrolled(tmp_path), journal, clock=Clock())
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(app, pilot)
        await pilot.press("s")
        await pilot.pause()
        assert isinstance(app.screen, AcceptStopsScreen)
        assert not app.state.running
        # no reason: refused, the form stays
        await pilot.press(*"R. Okafor", "enter", "enter")
        await pilot.pause()
        assert isinstance(app.screen, AcceptStopsScreen) and not app.state.running
        # typed at once, no pauses: every key lands in the focused field
        await pilot.press(*"door open, portable monitor worn", "enter")
        await settle(app, pilot)
        assert app.state.running
    with Journal(journal) as j:
        (acc,) = j.accepted_stops(app.state.session_id)
        assert acc.operator == "R. Okafor" and acc.reason == "door open, portable monitor worn"
        assert acc.code == "room-release" and "oxygen" in acc.text
        assert j.sessions()[-1].operator == "R. Okafor"


async def test_a_name_and_reason_typed_while_the_form_opens_land_in_their_fields(tmp_path):
    # "s", the name, Tab, the reason and Enter in one burst (a fast typist, a paste): nothing lost
    journal = tmp_path / "j.sqlite"
    app = make_app(_uncontrolled(tmp_path), journal, clock=Clock())
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(app, pilot)
        burst(app, "s", "A. Brandt", "tab", "monitor checked", "enter")
        await settle(app, pilot)
        await settle(app, pilot)
        assert app.state.running
    with Journal(journal) as j:
        (acc,) = j.accepted_stops(app.state.session_id)
        assert (acc.operator, acc.reason) == ("A. Brandt", "monitor checked")


async def test_escape_does_not_start_a_session_over_a_stop(tmp_path):
    app = make_app(_uncontrolled(tmp_path), tmp_path / "j.sqlite", clock=Clock())
    async with app.run_test(size=(80, 24)) as pilot:
        await settle(app, pilot)
        await pilot.press("s")
        await pilot.pause()
        await pilot.press("escape")
        await settle(app, pilot)
        assert not app.state.running and isinstance(app.screen, OverviewScreen)


async def test_a_regulator_fed_below_its_set_point_shows_not_regulating(tmp_path):
    # reg-gaps is set to 3.0 bar(g); the cylinder at 2.5 bar(g) cannot feed it
    text = (ROOT / "profiles" / "demo-teaching-bench.toml").read_text().replace('reading = "64 bar"',
                                                                                  'reading = "2.5 bar"')
    p = tmp_path / "low.toml"
    p.write_text(text)
    app = make_app(p, tmp_path / "j.sqlite", clock=Clock())
    async with app.run_test(size=(100, 32)) as pilot:
        await settle(app, pilot)
        more = app.screen.query_one("#supplies-more")
        assert "not regulating" in str(more.get_cell("n2-A", "outlet"))
        assert "STOP" in str(app.screen.query_one("#status").render())
