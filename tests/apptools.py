"""Shared helpers of the app tests: a settable clock and waiting for the app to settle."""

from __future__ import annotations

import datetime as dt

from textual import events

T0 = dt.datetime(2026, 12, 1, 9, 30, tzinfo=dt.UTC)


class Clock:
    """A clock the test sets (``clock.t = ...``)."""

    def __init__(self, t: dt.datetime = T0) -> None:
        self.t = t

    def __call__(self) -> dt.datetime:
        return self.t


async def settle(app, pilot, rounds: int = 2) -> None:
    """Let the workers (CoolProp, the journal) finish and the screen refresh."""
    for _ in range(rounds):
        await pilot.pause()
        await app.workers.wait_for_complete()
    await pilot.pause()


def screen_text(app) -> list[str]:
    """What the terminal shows now, line by line (the composited screen, modals included)."""
    return ["".join(seg.text for seg in strip) for strip in app.screen._compositor.render_strips()]


_NAMES = {" ": "space", ",": "comma", ".": "full_stop", "-": "minus", ":": "colon", "/": "slash", "'": "apostrophe"}


def burst(app, *keys: str) -> None:
    """Keys as a terminal delivers a paste or a scanner: all queued at once, no pause between."""
    for k in keys:
        for ch in ([k] if k in ("tab", "shift+tab", "enter", "escape") else list(k)):
            name = _NAMES.get(ch, ch)
            ev = events.Key(name, ch if len(ch) == 1 else None)
            ev.set_sender(app)
            app._driver.send_message(ev)
