"""Marks → text for the screen, JSON-ready dicts, and the class summary as CSV rows."""

from __future__ import annotations

from ..timekeeping import round_to_second

from datetime import datetime

from .. import CAUTION
from .classwork import ClassMarks, StudentMarks
from .diagnose import CHAINS, Figure, SightMark
from .sheet import format_cell

UNITS = {"utc_time": "s", "zt": "s", "z": "deg", "zn": "deg", "intercept": "nmi", "t_a": None,
         "ap_lat": "arcmin"}
STATUS_WORD = {"right": "right", "wrong": "WRONG", "carried": "carried", "blank": "blank"}


def _unit(name: str) -> str | None:
    return UNITS.get(name, "arcmin")


def _cell(name: str, value) -> str:
    if isinstance(value, datetime):
        return round_to_second(value).strftime("%Y-%m-%d %H:%M:%S")
    return "" if value is None else format_cell(name, value)


def figure_dict(f: Figure) -> dict:
    d = {"figure": f.name, "step": f.step, "status": f.status, "value": _cell(f.name, f.value),
         "expected": _cell(f.name, f.expected)}
    unit = _unit(f.name)
    if unit and f.difference is not None and f.status != "right":
        d[f"difference_{unit}"] = round(f.difference, 2)
    return d


def sight_dict(m: SightMark) -> dict:
    return {"sight": m.sight, "body": m.body, "first_wrong": dict(m.first_wrong),
            "mistakes": m.mistakes,
            "slips": [{"code": s.code, "chain": s.chain, "step": s.step, "sentence": s.sentence}
                      for s in m.slips],
            "lop_effect_nmi": None if m.lop_effect_nmi is None else round(m.lop_effect_nmi, 1),
            "steps": [figure_dict(f) for f in m.figures]}


def fix_dict(f) -> dict:
    r = lambda v, k=6: None if v is None else round(v, k)  # noqa: E731
    return {"fix": f.fix, "sights": list(f.sights), "verdict": f.verdict,
            "lat_deg": r(f.lat_deg), "lon_deg": r(f.lon_deg),
            "own_lat_deg": r(f.own_lat_deg), "own_lon_deg": r(f.own_lon_deg),
            "off_own_nmi": r(f.off_own_nmi, 2),
            "reference_lat_deg": r(f.reference_lat_deg), "reference_lon_deg": r(f.reference_lon_deg),
            "off_reference_nmi": r(f.off_reference_nmi, 2), "note": f.note}


def student_dict(st: StudentMarks) -> dict:
    return {"student": st.student, "verdict": st.verdict,
            "sights": [sight_dict(m) for m in st.sights],
            "fixes": [fix_dict(f) for f in st.fixes], "notes": list(st.notes)}


def class_dict(cm: ClassMarks) -> dict:
    return {"students": len(cm.students), "slips": cm.slips, "share_correct": cm.share_correct,
            "fully_right": list(cm.fully_right), "unexplained": list(cm.unexplained)}


def marks_dict(cm: ClassMarks) -> dict:
    """The whole of ``nav mark --json``."""
    return {"students": [student_dict(st) for st in cm.students], "class": class_dict(cm),
            "caution": CAUTION}


def _effect_text(nmi: float | None) -> str:
    if nmi is None:
        return "LOP: not plotted (a figure of the line is blank)"
    if abs(nmi) < 0.05:
        return "LOP: where the reference puts it"
    return f"LOP: {abs(nmi):.1f} nmi {'toward' if nmi > 0 else 'away from'} the body"


def _figure_text(f: Figure) -> str:
    text = f"{f.name} {_cell(f.name, f.value) or '—'} {STATUS_WORD[f.status]}"
    if f.status in ("wrong", "carried") and f.expected is not None:
        unit = {"arcmin": "′", "s": " s", "deg": "°", "nmi": " nmi"}.get(_unit(f.name) or "", "")
        diff = "" if f.difference is None or _unit(f.name) is None else f", {f.difference:+.1f}{unit}"
        text += f" (reference {_cell(f.name, f.expected)}{diff})"
    return text


def student_lines(st: StudentMarks) -> list[str]:
    lines = [f"{st.student}: {st.verdict}"]
    for m in st.sights:
        marked = [f for f in m.figures if f.status != "right"]
        if not marked:
            lines.append(f"  sight {m.sight} ({m.body}): every figure right")
            continue
        if not m.slips:
            lines.append(f"  sight {m.sight} ({m.body}): no wrong figure; "
                         + "; ".join(_figure_text(f) for f in marked))
            continue
        lines.append(f"  sight {m.sight} ({m.body})")
        for chain in CHAINS:
            step = m.first_wrong.get(chain)
            if step is None:
                lines.append(f"    {chain:<10} no wrong step")
                continue
            slip = next(s for s in m.slips if s.chain == chain and s.step == step)
            lines.append(f"    {chain:<10} first wrong: {step}; {slip.code}: {slip.sentence}")
            for later in (s for s in m.slips if s.chain == chain and s.step != step):
                lines.append(f"    {'':<10} also at {later.step}; {later.code}: {later.sentence}")
        lines.append(f"    {_effect_text(m.lop_effect_nmi)}")
        lines.append("    " + "; ".join(_figure_text(f) for f in marked))
    for f in st.fixes:
        own = "" if f.off_own_nmi is None else f"{f.off_own_nmi:.1f} nmi from own lines, "
        ref = "" if f.off_reference_nmi is None else f"{f.off_reference_nmi:.1f} nmi from the reference"
        lines.append(f"  fix {f.fix} (sights {' '.join(f.sights)}): {f.verdict}; {own}{ref}"
                     + (f"; {f.note}" if f.note else ""))
    for note in st.notes:
        lines.append(f"  note: {note}")
    return lines


def class_lines(cm: ClassMarks) -> list[str]:
    lines = [f"Class: {len(cm.students)} sheet(s); fully right: "
             f"{', '.join(cm.fully_right) or 'none'}"]
    for code, entry in sorted(cm.slips.items()):
        sights = ", ".join(f"{s} #{i}" for s, i in entry["sights"])
        lines.append(f"  {code}: {len(entry['students'])} student(s), {sights}")
    if cm.share_correct:
        lines.append("  share correct by step: " + ", ".join(
            f"{step} {share:.0%}" for step, share in cm.share_correct.items()))
    if cm.unexplained:
        lines.append("  nav could not explain: " + ", ".join(
            f"{u['student']} #{u['sight']} {u['step']}" for u in cm.unexplained))
    return lines


SUMMARY_COLUMNS = ("section", "item", "students", "sights", "share")


def summary_rows(cm: ClassMarks) -> list[dict]:
    """The class summary as CSV rows (:data:`SUMMARY_COLUMNS`)."""
    rows = []
    for code, entry in sorted(cm.slips.items()):
        rows.append({"section": "slip", "item": code, "students": " ".join(entry["students"]),
                     "sights": " ".join(f"{s}:{i}" for s, i in entry["sights"]), "share": ""})
    for step, share in cm.share_correct.items():
        rows.append({"section": "step", "item": step, "students": "", "sights": "",
                     "share": f"{share:.3f}"})
    for name in cm.fully_right:
        rows.append({"section": "fully_right", "item": name, "students": name, "sights": "",
                     "share": ""})
    for u in cm.unexplained:
        rows.append({"section": "unexplained", "item": u["step"], "students": u["student"],
                     "sights": f"{u['student']}:{u['sight']}", "share": ""})
    return rows
