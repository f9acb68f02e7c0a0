"""Which cases are the invented demo's own, and the site name a case is shown under.

Only the demo site's own cases (loaded by :func:`jtcheck.records.demo.load_demo`) are labelled invented: a user's
case filed in a unit of the demo site is the user's, and its page and record name the site without the word.
"""
from __future__ import annotations

from typing import Any

#: The demo site's name as stored (the word "invented" is part of it, for the sites page and the demo's records).
SITE_NAME = "Kestrel Ridge gas terminal (invented)"
#: The basis every demo case carries.
DEMO_NOTE = "Demo data: invented, for demonstration only; not a design value."
_INVENTED = " (invented)"


def is_demo_case(case: Any) -> bool:
    """A case of the invented demo data, not a user's own case filed in a demo unit."""
    return case.unit.site.name == SITE_NAME and case.basis == DEMO_NOTE


def in_demo_site(case: Any) -> bool:
    """A user's own case filed in a unit of the demo site."""
    return case.unit.site.name == SITE_NAME and not is_demo_case(case)


def site_label(case: Any) -> str:
    """The site a case is shown under: its site's name; for a user's case in the demo site, without "(invented)"
    (the user's inputs are not invented)."""
    name = case.unit.site.name
    return name.removesuffix(_INVENTED) if in_demo_site(case) else name
