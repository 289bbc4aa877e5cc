"""The UT1 caution of any surface that shows an almanac value, a reduction or a fix.

Every edge (CLI text and JSON, shell) calls :func:`ut1_cautions` with the instants its figures
are for and shows what it returns: nothing while UT1 is an IERS measured value, else one line
(the latest instant decides; see :func:`nav.iers.ut1_status`), once however many rows it covers.
"""

from __future__ import annotations

from datetime import datetime


def _flatten(instants) -> list:
    import numpy as np

    from .timekeeping import to_datetime64

    out = []
    for x in instants:
        if x is None:
            continue
        if isinstance(x, (list, tuple)):
            out.extend(_flatten(x))
            continue
        if isinstance(x, datetime):
            out.append(to_datetime64(x))
            continue
        arr = np.asarray(x)
        if arr.dtype.kind == "M":
            out.extend(arr.astype("datetime64[us]").ravel())
        elif arr.dtype == object:
            out.extend(_flatten(list(arr.ravel())))
    return out


def ut1_cautions(*instants) -> list[str]:
    """The UT1 caution lines for these instants (datetimes, datetime64s, arrays or lists of them;
    None is skipped): an empty list where UT1 is measured at all of them."""
    import numpy as np

    from .ephemeris import ut1_status

    t64 = _flatten(instants)
    if not t64:
        return []
    message = ut1_status(np.array(t64, dtype="datetime64[us]")).message
    return [message] if message else []


def ut1_text(*instants, indent: str = "") -> list[str]:
    """The caution lines as the text surfaces show them (``! `` and the line)."""
    return [f"{indent}! {m}" for m in ut1_cautions(*instants)]


def ut1_message_and_mask(t64):
    """For a batch of instants (datetime64, UTC): the UT1 caution line (the latest instant
    decides) and the mask of the instants it concerns (past the IERS measured values), or
    (None, None) where UT1 is measured at all of them."""
    from .ephemeris import ut1_status
    from .iers import beyond_measured

    message = ut1_status(t64).message
    return (message, beyond_measured(t64)) if message else (None, None)

