"""Element sets: reading TLE, three-line TLE and CCSDS OMM (XML, CSV, JSON), with checks.

Every element set becomes an :class:`ElementSet` holding an ``sgp4`` ``Satrec``
initialised for WGS72 in the improved operation mode ('i'), the same as
``Satrec.twoline2rv`` gives. Nothing is propagated here: the pass engine does
that and reports SGP4 errors per satellite. Initialisation is checked, though
(``satrec.error`` must be 0).

Formats (detected from the content, the file extension only breaks ties):

* TLE: two 69-column lines per element set, optionally preceded by a title
  line (three-line form; a title may start with ``"0 "``). Columns as in the
  NORAD two-line element format (Spacetrack Report #3; CelesTrak's format
  documentation), checksum in column 69: the sum of the digits of columns 1-68,
  each '-' counting 1, modulo 10.
* OMM XML: CCSDS 502.0-B NDM/XML layout, ``ndm/omm/body/segment`` with
  ``metadata`` and ``data/meanElements`` + ``data/tleParameters``.
* OMM CSV: a header row of OMM keywords (OBJECT_NAME, EPOCH, MEAN_MOTION, ...),
  one element set a row.
* OMM JSON: a list of objects with the same keywords, or a single object.

Every problem raises :class:`planner.errors.UserError` with one line that starts
``path:line:`` and says what is allowed.

Modules:

* ``model``: ``ElementSet`` and the ranges every element set obeys (years, catalog
  numbers, mean motion, printable names), and how its numbers map onto SGP4.
* ``tle``: TLE and three-line TLE, field by field in their columns, with the checksum.
* ``omm``: one OMM's keywords, checked, to an ``ElementSet`` (shared by the three forms).
* ``omm_csv``, ``omm_json``, ``omm_xml``: the three OMM file forms.
* ``read``: ``read_elements``, the capped read of a file and the detection of its form.
* ``selection``: choosing one satellite's element set, and the element-age checks.
"""

from planner.bounds import (
    EARLIEST_YEAR,
    LATEST_YEAR,
    MAX_OMM_CATALOG_NUMBER,
    SUPPORTED_YEARS,
    control_character,
    in_supported_years,
)
from planner.elements.model import (
    ElementSet,
)
from planner.elements.read import read_elements
from planner.elements.selection import (
    STALE_REFUSAL_DAYS,
    STALE_WARNING_DAYS,
    check_element_age,
    element_age_days,
    select_element_set,
)
from planner.elements.tle import tle_checksum

__all__ = [
    "ElementSet",
    "read_elements",
    "select_element_set",
    "element_age_days",
    "check_element_age",
    "tle_checksum",
    "STALE_WARNING_DAYS",
    "STALE_REFUSAL_DAYS",
    "EARLIEST_YEAR",
    "LATEST_YEAR",
    "SUPPORTED_YEARS",
    "MAX_OMM_CATALOG_NUMBER",
    "in_supported_years",
    "control_character",
]
