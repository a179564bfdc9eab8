"""Regenerate the SVG screenshots in docs/screenshots/ (run: uv run python docs/make_screenshots.py).

The app is driven headless with a fixed clock and a throw-away journal, exactly as the tests do.
"""

import asyncio
import datetime as dt
import tempfile
from pathlib import Path

from gasbench.tui.app import make_app

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
            app.save_screenshot("overview-80x24.svg", str(OUT))


if __name__ == "__main__":
    asyncio.run(shoot())
    print(f"screenshots written to {OUT}")
