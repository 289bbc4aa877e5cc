"""A class's sheets marked against one exercise, and the class summary.

Each student's rows are matched to the exercise's sights by ``sight`` id; every sight is marked
(:func:`nav.marking.diagnose.mark_sight`), every plotted fix checked
(:func:`nav.marking.fixes.mark_fix`), and a student whose sights all show the same error in Ho
is told that the index error or the dip is suspect.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..errors import NavInputError
from .diagnose import CHAINS, SightMark, mark_sight
from .fixes import FixMark, mark_fix

SAME_OFFSET_SPREAD_ARCMIN = 0.2    # Ho errors that agree this closely are one error
SAME_OFFSET_MIN_ARCMIN = 0.5       # and this large is worth a word


@dataclass(frozen=True)
class StudentMarks:
    student: str
    sights: tuple[SightMark, ...]
    fixes: tuple[FixMark, ...]
    notes: tuple[str, ...] = ()

    @property
    def verdict(self) -> str:
        wrong = any(f.status == "wrong" for m in self.sights for f in m.figures)
        bad_fix = any(f.verdict in ("wrong", "carried") for f in self.fixes)
        return "mistaken" if wrong or bad_fix else "correct"


@dataclass(frozen=True)
class ClassMarks:
    students: tuple[StudentMarks, ...]
    slips: dict = field(default_factory=dict)          # code -> {"students", "sights"}
    share_correct: dict = field(default_factory=dict)  # step -> share right or carried
    fully_right: tuple[str, ...] = ()
    unexplained: tuple[dict, ...] = ()


def _same_offset_note(marks: list[SightMark], sheets: list[dict]) -> str | None:
    diffs = []
    for m in marks:
        ho = next((f for f in m.figures if f.name == "ho"), None)
        if ho is None or ho.value is None or ho.difference is None:
            return None
        diffs.append(ho.difference)
    if len(diffs) < 2:
        return None
    spread = max(diffs) - min(diffs)
    mean = sum(diffs) / len(diffs)
    if spread <= SAME_OFFSET_SPREAD_ARCMIN and abs(mean) >= SAME_OFFSET_MIN_ARCMIN:
        return (f"every sight's Ho is off by the same {mean:+.1f}′: the index error or the dip "
                "(height of eye) is suspect")
    return None


def mark_class(rows, sheets: list[dict], fixes: list[dict] = ()) -> ClassMarks:
    """Mark every student's sheet rows against the exercise `rows` (SightRows)."""
    by_id = {r.sight_id: r for r in rows}
    students: dict[str, list[dict]] = {}
    for s in sheets:
        students.setdefault(s["student"], []).append(s)
    fixes_by: dict[str, list[dict]] = {}
    for f in fixes:
        fixes_by.setdefault(f["student"], []).append(f)
    out = []
    for name, mine in students.items():
        notes = []
        seen: dict[str, dict] = {}
        for s in mine:
            sid = str(s["sight"])
            if sid in seen:
                raise NavInputError(f"{name} has sight {sid} twice", field="sight", row=s["_row"],
                                    example="one row per student per sight")
            if sid not in by_id:
                notes.append(f"sight {sid} is not in the exercise")
                continue
            seen[sid] = s
        missing = [i for i in by_id if i not in seen]
        if missing:
            notes.append(f"no row for sight(s) {' '.join(missing)}")
        marks = [mark_sight(seen[i], by_id[i]) for i in by_id if i in seen]
        note = _same_offset_note(marks, list(seen.values()))
        if note:
            notes.append(note)
        refs = {m.sight: m.reference for m in marks}
        for i in by_id:
            if i not in refs:
                from .reference import work_sheet

                refs[i] = work_sheet(by_id[i])
        fmarks = [mark_fix(f, seen, by_id, refs) for f in fixes_by.get(name, [])]
        out.append(StudentMarks(name, tuple(marks), tuple(fmarks), tuple(notes)))
    for name in fixes_by:
        if name not in students:
            raise NavInputError(f"fixes of '{name}', who has no sheet", field="student",
                                example="the same names in both files")
    return _summary(out)


def _summary(students: list[StudentMarks]) -> ClassMarks:
    slips: dict = {}
    counts: dict = {}
    unexplained = []
    for st in students:
        for m in st.sights:
            for sl in m.slips:
                entry = slips.setdefault(sl.code, {"students": [], "sights": []})
                if st.student not in entry["students"]:
                    entry["students"].append(st.student)
                entry["sights"].append([st.student, m.sight])
                if sl.code == "unexplained":
                    unexplained.append({"student": st.student, "sight": m.sight, "step": sl.step})
            for steps in CHAINS.values():
                for step in steps:
                    statuses = [f.status for f in m.figures if f.step == step]
                    if not statuses or all(s == "blank" for s in statuses):
                        continue
                    ok, n = counts.get(step, (0, 0))
                    good = all(s in ("right", "carried", "blank") for s in statuses)
                    counts[step] = (ok + good, n + 1)
    share = {step: round(ok / n, 3) for step, (ok, n) in counts.items()}
    fully = tuple(st.student for st in students if st.verdict == "correct"
                  and not any(f.status == "blank" for m in st.sights for f in m.figures))
    return ClassMarks(tuple(students), slips, share, fully, tuple(unexplained))
