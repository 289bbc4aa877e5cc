"""Text and JSON for the checks on the sights themselves: the sight series, the fix with a
shared altitude error, set and drift, the watch's rate. Formatting only; nothing computed here.
"""

from __future__ import annotations

from .angles import format_dm, format_lat, format_lon
from .timekeeping import format_hms


def _iso(t) -> str:
    return f"{t:%Y-%m-%dT%H:%M:%S}Z" if t.microsecond == 0 else \
        f"{t:%Y-%m-%dT%H:%M:%S.%f}"[:-5] + "Z"


def series_dict(run) -> dict:
    """One run in the JSON contract of ``nav series --json``."""
    return {
        "body": run.body, "limb": run.limb,
        "sights": [{"row": s.line if s.line is not None else s.row, "utc": _iso(s.utc), "hs_deg": round(s.hs_deg, 7),
                    "residual_arcmin": round(s.residual_arcmin, 3),
                    "threshold_arcmin": round(s.threshold_arcmin, 3), "flagged": s.flagged}
                   for s in run.shots],
        "offset_arcmin": round(run.offset_arcmin, 3),
        "robust_sigma_arcmin": round(run.robust_sigma_arcmin, 3),
        "averaged": {"utc": _iso(run.averaged_utc), "hs_deg": round(run.averaged_hs_deg, 7),
                     "from_rows": list(run.used_lines)},
    }


def series_lines(run, names=None) -> list[str]:
    """One run in navigator notation: each shot's departure from the run, flags, the average.
    `names`: {row: name} to call the shots by (the shell's entry ids); default ``row N``."""
    from .series import FLOOR_ARCMIN, K_SIGMA

    limb = f" {run.limb} limb" if run.limb in ("lower", "upper") else ""
    first, last = run.shots[0].utc, run.shots[-1].utc
    out = [f"Run of {len(run.shots)} sights of {run.body}{limb}, "
           f"{format_hms(first)}\u2013{format_hms(last)}",
           f"  offset (Ho \u2212 Hc at the DR, median)  {round(run.offset_arcmin, 1) + 0.0:+.1f}\u2032; "
           f"scatter (robust \u03c3) {run.robust_sigma_arcmin:.1f}\u2032; "
           f"flag beyond {K_SIGMA:g} \u03c3 of the other shots, never under {FLOOR_ARCMIN:g}\u2032"]
    for s in run.shots:
        mark = f"  << {abs(s.residual_arcmin):.1f}\u2032 {'high' if s.residual_arcmin > 0 else 'low'}" \
               if s.flagged else ""
        name = names[s.row] if names else f"line {s.line if s.line is not None else s.row}"
        out.append(f"    {name:<9}{format_hms(s.utc)}  Hs {format_dm(s.hs_deg, decimals=1):>10}"
                   f"  {round(s.residual_arcmin, 1) + 0.0:+6.1f}\u2032{mark}")
    used = run.used_rows
    used_names = (", ".join(names[r] for r in used) if names
                  else "lines " + ", ".join(map(str, run.used_lines)))
    out.append(f"  averaged sight  {format_hms(run.averaged_utc)}  Hs "
               f"{format_dm(run.averaged_hs_deg, decimals=1)}  (from {used_names})")
    return out


def dr_ep_text(dr, ep) -> str:
    """``DR 41°12.4′ N 032°07.1′ W   EP 41°10.9′ N 032°05.0′ W``."""
    text = f"DR {format_lat(dr[0])} {format_lon(dr[1])}"
    if ep is not None:
        text += f"   EP {format_lat(ep[0])} {format_lon(ep[1])}"
    return text


def bias_lines(bf) -> list[str]:
    """The shared altitude error under the fix's own lines."""
    b = round(bf.bias_arcmin, 1) + 0.0
    sense = ("the observed altitudes read high" if b > 0 else
             "the observed altitudes read low" if b < 0 else "no shared error to speak of")
    out = [f"  shared error {b:+.1f}\u2032 \u00b1 {bf.bias_sigma_arcmin:.1f}\u2032 "
           f"(1\u03c3; + when the altitudes read high): {sense}",
           f"  position \u03c3  {bf.sigma_north_nmi:.1f} nmi N\u2013S, {bf.sigma_east_nmi:.1f} nmi "
           "E\u2013W, with the shared error estimated"]
    if bf.significant:
        out.append("  usual causes: " + "; ".join(bf.causes))
    else:
        out.append("  not significant: the ordinary fix is as good, and has the smaller ellipse")
    return out


def _r(x, k=7):
    return None if x is None else round(float(x), k)


def chain_keys(c) -> dict:
    """The keys a fix of a batch file adds to its JSON: label, EP, set and drift since the
    previous fix, whether the lines went along the EP track."""
    out = {}
    if c.label:
        out["label"] = c.label
    if c.ep is not None:
        out["ep_lat_deg"], out["ep_lon_deg"] = _r(c.ep[0]), _r(c.ep[1])
    if c.set_drift is not None:
        sd = c.set_drift
        out["set_drift"] = {"set_deg": round(sd.set_deg, 2), "drift_kn": round(sd.drift_kn, 3),
                            "since_utc": _iso(sd.since_utc)}
    if c.along_ep:
        out["advanced_along_ep"] = True
    if c.notes:
        out["notes"] = list(c.notes)
    return out


def set_drift_text(sd) -> str:
    return (f"set {sd.set_deg:05.1f}\u00b0, drift {sd.drift_kn:.1f} kn since "
            f"{format_hms(sd.since_utc)} ({sd.dist_nmi:.1f} nmi from the DR in {sd.hours:.1f} h)")


def chain_lines(c) -> list[str]:
    out = []
    r = c.result
    if c.ep is not None:
        out.append("  " + dr_ep_text((r.dr_lat_deg, r.dr_lon_deg), c.ep) + "  at the fix time")
    if c.set_drift is not None:
        out.append("  current      " + set_drift_text(c.set_drift))
    out += [f"  note: {n}" for n in c.notes]
    return out
