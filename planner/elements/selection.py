"""Choosing one satellite's element set (by catalog number or name) and checking element age.

SGP4 predictions degrade with distance from the epoch, so the age of the elements against
the prediction window is warned about beyond ``STALE_WARNING_DAYS`` and refused beyond
``STALE_REFUSAL_DAYS`` unless the user insists.
"""

from __future__ import annotations

from datetime import datetime

from planner.elements.model import ElementSet, _utc
from planner.errors import UserError, warn

STALE_WARNING_DAYS = 7.0
STALE_REFUSAL_DAYS = 30.0


def _normalize_name(name: str) -> str:
    return " ".join(name.split()).casefold()


def _available(element_sets: list[ElementSet], limit: int = 5) -> str:
    labels = list(dict.fromkeys(es.label for es in element_sets))
    shown = ", ".join(labels[:limit])
    if len(labels) > limit:
        shown += f" and {len(labels) - limit} more"
    return shown


def select_element_set(
    element_sets: list[ElementSet],
    *,
    norad_id: int | None = None,
    name: str | None = None,
    source: str = "",
) -> ElementSet:
    """Pick one satellite's element set: by NORAD id, else by name (case and spacing ignored).

    When a file holds several element sets of the same satellite, the one with the latest
    epoch is taken. ``source`` names the file in messages (default: from the element sets).
    """
    if not source:
        source = element_sets[0].source.rsplit(":", 1)[0] if element_sets else "elements"
    if norad_id is None and (name is None or not name.strip()):
        raise UserError(f"{source}: no satellite chosen; give norad_id or name (available: {_available(element_sets) or 'none'})")
    if not element_sets:
        raise UserError(f"{source}: no element sets to choose from; expected TLE, 3LE or OMM (XML/CSV/JSON)")
    if norad_id is not None:
        matches = [es for es in element_sets if es.norad_id == norad_id]
        wanted = f"NORAD id {norad_id}"
    else:
        assert name is not None  # refused above when neither norad_id nor name is given
        key = _normalize_name(name)
        matches = [es for es in element_sets if _normalize_name(es.name) == key]
        wanted = f"name {name.strip()!r}"
    if not matches:
        raise UserError(f"{source}: no element set for {wanted}; available: {_available(element_sets)}")
    ids = sorted({es.norad_id for es in matches})
    if len(ids) > 1:
        raise UserError(f"{source}: {wanted} is ambiguous, it matches {_available(matches)}; choose by norad_id")
    return max(matches, key=lambda es: es.epoch)


def element_age_days(element_set: ElementSet, window_start: datetime, window_end: datetime) -> float:
    """Days from the element epoch to the window; 0 when the epoch lies inside it.

    Naive datetimes are taken as UTC.
    """
    start, end = _utc(window_start), _utc(window_end)
    if end < start:
        start, end = end, start
    epoch = element_set.epoch
    if epoch < start:
        return (start - epoch).total_seconds() / 86400.0
    if epoch > end:
        return (epoch - end).total_seconds() / 86400.0
    return 0.0


def check_element_age(
    element_sets: list[ElementSet],
    window_start: datetime,
    window_end: datetime,
    *,
    allow_stale: bool = False,
) -> None:
    """Warn beyond 7 days between epoch and window; refuse beyond 30 unless ``allow_stale``.

    SGP4 predictions degrade with distance from the epoch (along-track errors of the order
    of kilometres a day for LEO; common practice, no published source), hence the limits.
    """
    for element_set in element_sets:
        age = element_age_days(element_set, window_start, window_end)
        head = f"{element_set.source}: elements for {element_set.label} are {age:.1f} days from the window"
        if age > STALE_REFUSAL_DAYS and not allow_stale:
            raise UserError(f"{head}; refused beyond {STALE_REFUSAL_DAYS:g} days (use --allow-stale to go on)")
        if age > STALE_REFUSAL_DAYS:
            warn(
                f"{head}; beyond {STALE_REFUSAL_DAYS:g} days, going on because of --allow-stale; "
                "pass times may be far off, fetch newer elements"
            )
        elif age > STALE_WARNING_DAYS:
            warn(f"{head}; beyond {STALE_WARNING_DAYS:g} days pass times drift, fetch newer elements")
