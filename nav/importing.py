"""Batch sight rows -> passage-log entries: the one import used by `nav import` and the shell.

Policy: the log keeps what the file says, as typed. A row's DR, course and speed become a ``dr``
entry; each sight a ``sight`` entry (``time_source`` utc) holding the cells that were typed — Hs,
limb, index error, height of eye, weather, horizon, σ — beside their parsed values. A cell left
empty is *not* filled with the batch default: in a passage log, the setting in force applies, as
for a sight typed in the shell. :func:`blank_cell_notes` says where that differs from what
``nav reduce`` / ``nav fix`` would use for the same file, so the user is told, not surprised.
"""

from __future__ import annotations

from typing import Sequence

from .fields import SIGHT_FIELD_BY_NAME
from .sightfile import SightRow

# batch column -> (raw field, parsed field) of a sight entry, for the instrument values
INSTRUMENT_COLUMNS = {"index_error": ("index_error", "index_error_arcmin"),
                      "eye_height_m": ("eye_height", "eye_height_m"),
                      "temperature_c": ("temperature", "temperature_c"),
                      "pressure_hpa": ("pressure", "pressure_hpa")}
SETTING_OF_COLUMN = {"index_error": "index_error_arcmin", "eye_height_m": "eye_height_m",
                     "temperature_c": "temperature_c", "pressure_hpa": "pressure_hpa",
                     "horizon": "horizon"}


def entries_from_rows(rows: Sequence[SightRow], source: str) -> list[dict]:
    """Log entries for validated batch rows (see the module's policy)."""
    out = []
    for r in rows:
        typed = r.cells
        where = f"{source} {'line' if r.line is not None else 'row'} {r.line or r.row}"[:200]
        dr: dict = {}
        if "dr_lat" in typed:
            dr.update(lat=typed["dr_lat"], lat_deg=r.dr_lat_deg, lon=typed["dr_lon"],
                      lon_deg=r.dr_lon_deg, position_basis="dr")
        if "course_deg" in typed:
            dr.update(course=typed["course_deg"], course_deg=r.course_deg)
        if "speed_kn" in typed:
            dr.update(speed=typed["speed_kn"], speed_kn=r.speed_kn)
        if dr:
            out.append({"kind": "dr", "utc": r.utc, "time_text": typed["utc"], **dr,
                        "note": f"from {where}"})
        if "set_deg" in typed or "drift_kn" in typed:      # issue 10: a current from this row on
            from .current import row_currents

            cur = row_currents([r])[0]
            out.append({"kind": "current", "utc": r.utc, "time_text": typed["utc"],
                        "set": typed.get("set_deg", "0"), "set_deg": cur.set_deg if cur else 0.0,
                        "drift": typed.get("drift_kn", "0"),
                        "drift_kn": cur.drift_kn if cur else 0.0, "source": where})
        sight = {"kind": "sight", "body": r.body, "utc": r.utc, "time_source": "utc",
                 "time_text": typed["utc"], "hs": typed["hs"], "hs_deg": r.hs_deg}
        if r.limb is not None:
            sight["limb"] = r.limb
        for column, (raw, parsed) in INSTRUMENT_COLUMNS.items():
            if column in typed:
                sight[raw], sight[parsed] = typed[column], getattr(r, parsed)
        if "horizon" in typed:
            sight["horizon"] = r.horizon
        if "sigma_arcmin" in typed:
            sight["sigma_arcmin"] = r.sigma_arcmin
        sight["source"] = where
        note = r.note
        if typed.get("fix"):                # the file's fix label: kept in the note, said so
            note = f"{note}; " if note else ""
            note += f"fix '{typed['fix']}' in {source}"
        if note:
            sight["note"] = note
        out.append(sight)
    return out


def blank_cell_notes(rows: Sequence[SightRow], settings) -> list[str]:
    """One line per instrument value that empty cells take from the log's settings in force
    (`settings`: a :class:`nav.passage.Settings`) where that differs from the batch default."""
    notes = []
    for column, name in SETTING_OF_COLUMN.items():
        blank = sum(column not in r.cells for r in rows)
        default, value = SIGHT_FIELD_BY_NAME[column].default, getattr(settings, name)
        if blank and value != default:
            notes.append(f"{blank} sight(s) with no {column} take the log's setting in force, "
                         f"{value} (nav fix on the file would use {default})")
    return notes
