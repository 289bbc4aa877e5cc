"""The navigational triangle as a sheet works it: Hc, Z from the elevated pole, Zn, intercept.

Z is the azimuth angle measured from the elevated pole (north in north latitude, south in south)
toward the east or the west, written as the trade writes it: ``N 134.7 E``. The rule that turns
Z into Zn (common practice, no source):

| latitude | LHA over 180° (body east) | LHA under 180° (body west) |
|----------|---------------------------|----------------------------|
| north    | Zn = Z                    | Zn = 360° − Z              |
| south    | Zn = 180° − Z             | Zn = 180° + Z              |

Hc and Zn come from :func:`nav.reduction.hc_zn`; this module only names and converts.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..angles import norm360
from ..errors import NavInputError

RULES = {("N", "E"): "Zn = Z", ("N", "W"): "Zn = 360° − Z", ("S", "E"): "Zn = 180° − Z",
         ("S", "W"): "Zn = 180° + Z"}


def zn_from_z(pole: str, z_deg: float, side: str) -> float:
    """Zn (degrees, [0, 360)) from Z named by its pole (N/S) and side (E/W)."""
    if pole == "N":
        return float(norm360(z_deg if side == "E" else 360.0 - z_deg))
    return float(norm360(180.0 - z_deg if side == "E" else 180.0 + z_deg))


def side_of(lha_deg: float) -> str:
    """E when the body is east of the meridian (LHA over 180°), else W."""
    return "E" if norm360(lha_deg) > 180.0 else "W"


def pole_of(lat_deg: float) -> str:
    """The elevated pole: N for north latitude (and the equator), S for south."""
    return "N" if lat_deg >= 0 else "S"


def z_from_zn(zn_deg: float, pole: str) -> float:
    """Z in [0, 180] from Zn, measured from the named pole."""
    zn = float(norm360(zn_deg))
    if pole == "N":
        return zn if zn <= 180.0 else 360.0 - zn
    return 180.0 - zn if zn <= 180.0 else zn - 180.0


@dataclass(frozen=True)
class Triangle:
    """Hc and Z of one sight; with Ho, the intercept (nmi, + toward) and T/A."""

    lat_deg: float
    dec_deg: float
    lha_deg: float
    hc_deg: float
    z_deg: float
    pole: str
    side: str
    zn_deg: float
    rule: str
    ho_deg: float | None = None
    intercept_nmi: float | None = None

    @property
    def z_text(self) -> str:
        return format_z(self.pole, self.z_deg, self.side)

    @property
    def toward(self) -> str | None:
        if self.intercept_nmi is None:
            return None
        return "T" if self.intercept_nmi >= 0 else "A"


def solve(lat_deg: float, dec_deg: float, lha_deg: float, ho_deg: float | None = None) -> Triangle:
    """Hc, Z, Zn (and with `ho_deg` the intercept) for latitude, declination and LHA."""
    from ..reduction import hc_zn

    hc, zn = hc_zn(lat_deg, dec_deg, norm360(lha_deg))
    pole, side = pole_of(lat_deg), side_of(lha_deg)
    z = z_from_zn(float(zn), pole)
    intercept = None if ho_deg is None else (ho_deg - float(hc)) * 60.0
    return Triangle(float(lat_deg), float(dec_deg), float(norm360(lha_deg)), float(hc), z, pole,
                    side, float(zn), RULES[(pole, side)], ho_deg, intercept)


def format_z(pole: str, z_deg: float, side: str) -> str:
    """``S 134.7 E``."""
    return f"{pole} {z_deg:.1f} {side}"


def parse_z(text: str, field: str = "z") -> tuple[str, float, str]:
    """Z as the trade writes it, ``S 134.7 E`` (or ``S134.7E``): (pole, degrees, side)."""
    s = str(text).strip().upper().replace("°", " ")
    if len(s) < 3 or s[0] not in "NS" or s[-1] not in "EW":
        raise NavInputError(f"'{text}' is not an azimuth angle Z", field=field,
                            example="S 134.7 E (from the elevated pole, toward E or W)")
    try:
        z = float(s[1:-1].strip())
    except ValueError:
        raise NavInputError(f"'{text}' is not an azimuth angle Z", field=field,
                            example="S 134.7 E") from None
    if not 0.0 <= z <= 180.0:
        raise NavInputError(f"Z {z:g}° is outside 0° to 180°", field=field, example="S 134.7 E")
    return s[0], z, s[-1]
