"""Figures derived from a bench's record, kept in memory by one caller between refreshes (the
app keeps them in its :class:`~benchwarden.workflows.model.Memo`): a supply's figure is computed
again only when the bench's events since it was computed name a reading, a strike or a cylinder
change of that supply, or when its other inputs (gas, volume, gauge) differ. Every write to the
record appends an event in the same transaction (:mod:`benchwarden.storage.events`), so the
newest event's number says whether anything changed, and the events after it say what: the
cost of a refresh is that of what changed, not of the history.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING, Any, TypeVar

from benchwarden.storage.journal import Journal

if TYPE_CHECKING:  # the app's memo; the first frame imports no plan model
    from benchwarden.workflows.model import Memo

__all__ = ["READING_KINDS", "HOLD_KINDS", "kept_figure", "is_kept", "keep", "kept_bench_figure"]

#: The events that change what a supply's readings give.
READING_KINDS = ("reading", "strike", "cylinder-change")
#: The events that change how the bench's hold tests are judged (a new one, a struck reading it
#: came from, a change that makes it an earlier cylinder's).
HOLD_KINDS = ("hold-test", "strike", "cylinder-change")

T = TypeVar("T")


def _forget_changed(memo: Memo, journal: Journal, bench: str) -> None:
    """Drop the kept figures of the supplies whose record changed since the memo last looked."""
    where = (str(journal.path), bench)
    seq = journal.last_event_seq(bench)
    seen = memo.seen.get(where)
    if seq is None or seen is None or seq < seen:
        touched: set[str | None] = {None}
    elif seq == seen:
        return
    else:
        touched = journal.event_supplies(bench, seen, READING_KINDS)
    for k in [k for k in memo.kept if k[:2] == where and (None in touched or k[2] in touched)]:
        del memo.kept[k]
    if seq is None:
        memo.seen.pop(where, None)
    else:
        memo.seen[where] = seq


def is_kept(memo: Memo | None, journal: Journal, bench: str, supply_id: str, what: str, inputs: Any) -> bool:
    """Whether ``what`` of the supply was computed (and :func:`keep` called) from these ``inputs``
    with no reading, strike or cylinder change of the supply recorded since."""
    if memo is None:
        return False
    _forget_changed(memo, journal, bench)
    hit = memo.kept.get((str(journal.path), bench, supply_id, what))
    return hit is not None and hit[0] == inputs


def keep(memo: Memo | None, journal: Journal, bench: str, supply_id: str, what: str, inputs: Any,
         value: Any = None) -> None:
    """Keep ``what`` of the supply, computed after :func:`is_kept` said it was not (the record
    it accounts for is the one :func:`is_kept` looked at: anything written since is seen next)."""
    if memo is not None and (str(journal.path), bench) in memo.seen:
        memo.kept[(str(journal.path), bench, supply_id, what)] = (inputs, value)


def kept_figure(memo: Memo | None, journal: Journal, bench: str, supply_id: str, what: str, inputs: Any,
                compute: Callable[[], T]) -> T:
    """``compute()``, or the value it gave before for the same supply, ``what`` and ``inputs``
    when no reading, strike or cylinder change of the supply was recorded since (nothing is kept
    without a memo, or on a journal without events)."""
    if is_kept(memo, journal, bench, supply_id, what, inputs):
        assert memo is not None
        return memo.kept[(str(journal.path), bench, supply_id, what)][1]  # type: ignore[no-any-return]
    value = compute()
    keep(memo, journal, bench, supply_id, what, inputs, value)
    return value


def kept_bench_figure(memo: Memo | None, journal: Journal, bench: str, what: str, kinds: tuple[str, ...],
                      compute: Callable[[], T]) -> T:
    """``compute()``, or the value it gave before while no event of ``kinds`` was recorded on the
    bench since (a figure of the whole bench; nothing is kept without a memo or events)."""
    seq = journal.last_event_seq(bench) if memo is not None else None  # read first
    if memo is None or seq is None:
        return compute()
    where = (str(journal.path), bench, "", what)
    hit = memo.windows.get(where)
    if hit is not None and hit[0] <= seq and (hit[0] == seq or not journal.event_supplies(bench, hit[0], kinds)):
        memo.windows[where] = (seq, hit[1])
        return hit[1]  # type: ignore[no-any-return]
    value = compute()
    memo.windows[where] = (seq, value)
    return value
