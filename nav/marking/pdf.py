"""A student's marked sheet as a printable page (PDF or PNG by the extension), via matplotlib.

One column per sight, one row per figure in the order it is worked; each cell holds the
student's figure, tinted by its mark (right, carried, wrong with the reference beside it, blank),
and under the table the first wrong step of each chain with the slip named, the LOP's shift,
the fixes and the notes. matplotlib is imported here only, when a sheet is drawn.
"""

from __future__ import annotations

from ..timekeeping import round_to_second

from .. import CAUTION
from ..errors import NavInputError
from .diagnose import figure_order
from .report import _cell

COLOURS = {"right": "#e3f2e1", "carried": "#fff1c9", "wrong": "#f8d0cc", "blank": "#eeeeee"}
MARKS = {"right": "✓", "carried": "c", "wrong": "✗", "blank": ""}


def _short(name: str, value) -> str:
    """A cell short enough for the page: UTC as day and time."""
    from datetime import datetime

    if isinstance(value, datetime):
        return round_to_second(value).strftime("%d %H:%M:%S")
    return _cell(name, value)


def _rows(st) -> list[str]:
    names: list[str] = []
    for m in st.sights:
        for name, _ in figure_order(m.reference.get("_kind", "sun")):
            present = any(f.name == name for f in m.figures)
            if present and name not in names:
                names.append(name)
    return names


def _lines(st) -> list[str]:
    from .report import _effect_text

    out = []
    for m in st.sights:
        firsts = [f"{c}: {s}" for c, s in m.first_wrong.items() if s]
        slips = "; ".join(f"{s.code} ({s.sentence})" for s in m.slips)
        out.append(f"Sight {m.sight} {m.body}: " + (", ".join(firsts) or "no wrong step")
                   + (f" — {slips}" if slips else "") + f". {_effect_text(m.lop_effect_nmi)}.")
    for f in st.fixes:
        out.append(f"Fix {f.fix} (sights {' '.join(f.sights)}): {f.verdict}"
                   + ("" if f.off_own_nmi is None else f", {f.off_own_nmi:.1f} nmi from own lines")
                   + ("" if f.off_reference_nmi is None
                      else f", {f.off_reference_nmi:.1f} nmi from the reference") + ".")
    out += [f"Note: {n}" for n in st.notes]
    return out


def marked_sheet_pdf(st, path: str, *, exercise: str = "") -> None:
    """Draw the marked sheet of one student (:class:`StudentMarks`) to `path` (.pdf or .png)."""
    import textwrap

    from matplotlib.figure import Figure

    names = _rows(st)
    fig = Figure(figsize=(8.27, 11.69))            # A4 portrait, inches
    ax = fig.add_axes((0.04, 0.30, 0.92, 0.62))
    ax.axis("off")
    header = ["figure"] + [f"#{m.sight} {m.body}" for m in st.sights]
    cells, colours = [], []
    for name in names:
        row, tint = [name], ["white"]
        for m in st.sights:
            f = next((f for f in m.figures if f.name == name), None)
            if f is None:
                row.append("")
                tint.append("white")
                continue
            text = f"{_short(name, f.value)} {MARKS[f.status]}".strip()
            if f.status == "wrong":
                text += f" [{_short(name, f.expected)}]"
            row.append(text)
            tint.append(COLOURS[f.status])
        cells.append(row)
        colours.append(tint)
    if not cells:
        raise NavInputError(f"{st.student} has no sight to draw", field="sheets",
                            example="rows for the exercise's sights")
    table = ax.table(cellText=cells, cellColours=colours, colLabels=header, loc="upper center",
                     cellLoc="left", colLoc="left")
    table.auto_set_font_size(False)
    table.set_fontsize(6.5 if len(st.sights) <= 4 else 5.5)
    table.scale(1.0, 0.95)
    fig.text(0.04, 0.965, f"{st.student} — {st.verdict}", fontsize=14, weight="bold")
    fig.text(0.04, 0.945, f"exercise {exercise}   ✓ right   c carried (right from own earlier "
                          "figures)   ✗ wrong [reference]   grey: blank", fontsize=8)
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    box = table.get_window_extent(FigureCanvasAgg(fig).get_renderer())
    y = box.y0 / fig.bbox.height - 0.025
    for line in _lines(st):
        for part in textwrap.wrap(line, 120):
            fig.text(0.04, y, part, fontsize=7)
            y -= 0.012
    fig.text(0.04, 0.015, textwrap.fill(CAUTION, 140), fontsize=6, color="#555555")
    ext = path.rsplit(".", 1)[-1].lower()
    if ext not in ("pdf", "png"):
        raise NavInputError("a marked sheet is saved as PDF or PNG", field="out",
                            example="marked.pdf")
    try:
        fig.savefig(path, format=ext, dpi=150, metadata={"Title": f"{st.student} {exercise}"})
    except OSError as exc:
        raise NavInputError(f"cannot write '{path}': {exc.strerror or exc}", field="out",
                            example="an existing, writable folder") from None
