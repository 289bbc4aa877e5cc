"""The parts of `nav fix` that go beyond the ordinary fix: the shared altitude error (--bias)."""

from __future__ import annotations


def with_bias(result, confidence: float, title: str):
    """(fix, LOPs shifted by the bias, sheet title, BiasFix) for a FixResult's sights."""
    from ..fixbias import shifted_lops, solve_fix_bias

    bf = solve_fix_bias(result.sights, result.dr_lat_deg, result.dr_lon_deg, result.fix.utc,
                        confidence=confidence)
    title = (f"{title}: shared altitude error {bf.bias_arcmin:+.1f}\u2032 "
             f"\u00b1 {bf.bias_sigma_arcmin:.1f}\u2032, lines shifted by it")
    return bf.fix, shifted_lops(result.lops, bf.bias_arcmin), title, bf


def bias_keys(bf) -> dict:
    return {"bias_arcmin": round(bf.bias_arcmin, 3),
            "bias_sigma_arcmin": round(bf.bias_sigma_arcmin, 3),
            "sigma_north_nmi": round(bf.sigma_north_nmi, 3),
            "sigma_east_nmi": round(bf.sigma_east_nmi, 3),
            "bias_significant": bf.significant, "bias_causes": list(bf.causes)}
