"""One spelling for a typed choice: the hyphen form is canonical, the underscore form is the same value.

A user who types ``quiet_rural`` or ``data_volume`` (the way a Python name is written) means
``quiet-rural`` or ``data-volume``; every place that reads a choice (the scenario's choice keys,
the pattern templates' text parameters, the command-line choice options) passes the text
through :func:`canonical_choice` once, so the rest of the program sees one spelling only.
"""

from __future__ import annotations

from typing import Any


def canonical_choice(value: Any) -> Any:
    """The hyphen form of a choice typed as text (``usable_time`` -> ``usable-time``); other values as given.

    Only text is changed, so a wrong type still reaches the validator and is reported as such.
    """
    if isinstance(value, str):
        return value.strip().replace("_", "-")
    return value
