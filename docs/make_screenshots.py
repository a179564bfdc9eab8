"""Regenerate the SVG screenshots in docs/screenshots/ (run: uv run python docs/make_screenshots.py).

The app is driven headless with a fixed clock and a throw-away journal, exactly as the tests do.
"""

import asyncio
import datetime as dt
import tempfile
from pathlib import Path

from benchwarden.tui.app import make_app

OUT = Path(__file__).resolve().parent / "screenshots"
T0 = dt.datetime(2026, 12, 1, 9, 30, tzinfo=dt.UTC)


class Clock:
    def __init__(self) -> None:
        self.t = T0

    def __call__(self) -> dt.datetime:
        return self.t


async def shoot() -> None:
    OUT.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        clock = Clock()
        app = make_app(None, Path(tmp) / "journal.sqlite3", clock=clock)
        async with app.run_test(size=(120, 34)) as pilot:
            async def settle() -> None:
                await pilot.pause()
                await app.workers.wait_for_complete()
                await pilot.pause()

            await settle()
            app.save_screenshot("overview.svg", str(OUT))
            await pilot.press("s")
            await settle()
            app.save_screenshot("cautions.svg", str(OUT))
            await pilot.press("escape")
            for minutes, pressure in ((0, "64 bar"), (50, "58 bar"), (100, "53 bar")):
                clock.t = T0 + dt.timedelta(minutes=minutes)
                await pilot.press("r")
                await settle()
                app.screen.query_one("#pressure").value = pressure
                if minutes == 100:
                    app.save_screenshot("reading.svg", str(OUT))
                await pilot.press("enter")
                await settle()
            app.save_screenshot("session.svg", str(OUT))
            await pilot.press("g")
            await settle()
            app.save_screenshot("graph.svg", str(OUT))
            await pilot.press("escape")
            await pilot.press("o")
            await settle()
            app.save_screenshot("room.svg", str(OUT))
            await pilot.press("escape")
            await pilot.press("k")
            await settle()
            app.save_screenshot("checklist.svg", str(OUT))
            await pilot.press("escape")
            await pilot.press("h")
            await settle()
            app.save_screenshot("history.svg", str(OUT))
            await pilot.press("escape")
            await pilot.press("question_mark")
            await settle()
            app.save_screenshot("help.svg", str(OUT))
            await pilot.press("escape")
            await pilot.press("t")  # a hold test started now, to finish later
            await settle()
            for i, v in (("hold-start", "53 bar"), ("hold-duration", "12 h"), ("hold-tstart", "21 degC")):
                app.screen.query_one(f"#{i}").value = v
            app.screen.query_one("#hold-begin").press()
            await settle()
            app.save_screenshot("hold.svg", str(OUT))
            await pilot.press("escape")
            await settle()
            app.clear_notifications()
            await settle()
            app.save_screenshot("hold-reminder.svg", str(OUT))
            await pilot.press("n")
            await settle()
            app.screen.query_one("#fill").value = "198 bar"
            app.screen.query_one("#label").value = "N2-0417"
            app.save_screenshot("change.svg", str(OUT))
        # the same bench at 80 x 24, the size the layout is designed for first
        app = make_app(None, Path(tmp) / "journal.sqlite3", clock=clock)
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause()
            await app.workers.wait_for_complete()
            await pilot.pause()
            if type(app.screen).__name__ == "ConfirmScreen":  # the session left running above
                await pilot.press("y")
                await pilot.pause()
                await app.workers.wait_for_complete()
                await pilot.pause()
            app.clear_notifications()
            await pilot.pause()
            app.save_screenshot("overview-80x24.svg", str(OUT))
            await pilot.press("r")
            await pilot.pause()
            app.screen.query_one("#pressure").value = "52 bar"
            await pilot.pause()
            app.save_screenshot("reading-80x24.svg", str(OUT))
            await pilot.press("escape")
            await pilot.press("p")
            await pilot.pause()
            for i, v in (("purge-volume", "0.8 L"), ("purge-flow", "1 slpm"), ("purge-operator", "A. Example")):
                app.screen.query_one(f"#{i}").value = v
            app.screen.query_one("#purge-record-cycles").press()
            await pilot.pause()
            await app.workers.wait_for_complete()
            await pilot.pause()
            app.save_screenshot("purge-80x24.svg", str(OUT))


async def shoot_live() -> None:
    """The demo bench with a live gauge: a logger's file with two hours of samples of a leaking
    cylinder (an invented trace), read by the app; the leak watch and its alarm."""
    from benchwarden.storage.profile import demo_profile_text

    with tempfile.TemporaryDirectory() as tmp:
        log = Path(tmp) / "n2-A.log"
        log.write_text("".join(f"{(T0 - dt.timedelta(seconds=7200 - 30 * i)).isoformat()},"
                               f"{61.80 - 0.005 * i:.2f}\n" for i in range(241)))
        anchor = 'gauge = { range = "315 bar", accuracy_class = 1.6 }\n'
        profile = Path(tmp) / "bench.toml"
        profile.write_text(demo_profile_text().replace(anchor, anchor + (
            f'[supplies.source]\nkind = "file"\npath = "{log}"\nvalue_unit = "bar"\ninterval = "1 s"\n'
            'delimiter = ","\ntime_column = 1\nvalue_column = 2\n'
            'range = "250 bar"\naccuracy_class = 0.1\nresolution = "0.01 bar"\n'), 1))
        for size, name in (((120, 34), "live.svg"), ((80, 24), "live-80x24.svg")):
            app = make_app(str(profile), Path(tmp) / f"journal-{size[0]}.sqlite3", clock=Clock())
            async with app.run_test(size=size) as pilot:
                for _ in range(60):  # the first poll, then the live refresh
                    await pilot.pause(0.1)
                    await app.workers.wait_for_complete()
                    if app.screen.state.live.get("n2-A") is not None:
                        break
                await pilot.pause(0.3)
                await app.workers.wait_for_complete()
                await pilot.pause()
                app.save_screenshot(name, str(OUT))
                if size[0] == 120:
                    await pilot.press("g")
                    await pilot.pause(0.3)
                    app.save_screenshot("graph-live.svg", str(OUT))


if __name__ == "__main__":
    asyncio.run(shoot())
    asyncio.run(shoot_live())
    print(f"screenshots written to {OUT}")
