"""The tool screens, one per module (kept here as one place to import them from)."""

from benchwarden.tui.screens.checklist import ChecklistScreen
from benchwarden.tui.screens.graph import LIVE_LOOKBACK_H, GraphScreen
from benchwarden.tui.screens.history import HistoryScreen
from benchwarden.tui.screens.hold import HoldScreen
from benchwarden.tui.screens.hold import hold_duration as _hold_duration  # the name tests use
from benchwarden.tui.screens.purge import PurgeScreen
from benchwarden.tui.screens.room import RoomScreen

__all__ = ["ChecklistScreen", "GraphScreen", "HistoryScreen", "HoldScreen", "PurgeScreen", "RoomScreen",
           "LIVE_LOOKBACK_H", "_hold_duration"]
