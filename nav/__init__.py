"""nav: a celestial-navigation sight-reduction workbench.

A working tool: a cross-check that backs up, and never replaces, approved navigation
practice, charts and instruments; the skipper stays responsible.

Importing this package imports nothing heavy: each module is imported where it is used.
"""

__version__ = "0.1.0"

CAUTION = (
    "CAUTION: nav is a cross-check that backs up, and never replaces, approved navigation "
    "practice, charts and instruments. The skipper stays responsible."
)
