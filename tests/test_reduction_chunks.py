"""Large inputs in chunks: the same numbers and the same row numbers as one piece.

The reference is nav's own one-piece reduction, itself checked against ERFA/astropy elsewhere
(tests/test_almanac_reference.py, tests/test_sight_chain.py): this only checks that chunking
changes nothing.
"""

import numpy as np
import pytest

import nav.reduction as red
from nav.errors import NavInputError
from nav.units import ARCSEC_DEG, NMI_M

BODIES = np.array(["Sun", "Vega", "Moon", "Sirius", "Mars", "Jupiter", "Arcturus", "Venus",
                   "Saturn", "Canopus", "Moon"], dtype=object)
T = np.datetime64("2026-06-20T04:00", "us") + np.arange(11) * np.timedelta64(37, "m")
HS = np.linspace(15.0, 70.0, 11)
KW = dict(eye_height_m=2.4, lat_deg=np.linspace(-30.0, 45.0, 11),
          lon_deg=np.linspace(-150.0, 160.0, 11))


def test_internal_chunks_and_streaming_equal_one_piece(monkeypatch):
    whole = red.reduce_sights(BODIES, T, HS, **KW)
    monkeypatch.setattr(red, "CHUNK_SIGHTS", 3)
    chunked = red.reduce_sights(BODIES, T, HS, **KW)
    streamed = list(red.iter_reduce_sights(BODIES, T, HS, chunk=4, **KW))
    assert [lo for lo, _ in streamed] == [0, 4, 8]
    for name in ("gha_deg", "dec_deg", "ho_deg", "hc_deg", "zn_deg"):
        np.testing.assert_allclose(getattr(chunked, name), getattr(whole, name), rtol=0,
                                   atol=1e-9 * ARCSEC_DEG)
        np.testing.assert_allclose(np.concatenate([getattr(r, name) for _, r in streamed]),
                                   getattr(whole, name), rtol=0, atol=1e-9 * ARCSEC_DEG)
    np.testing.assert_allclose(chunked.intercept_nmi, whole.intercept_nmi, rtol=0,
                               atol=1e-6 / NMI_M)
    assert chunked.warnings == whole.warnings and list(chunked.body) == list(whole.body)


def test_errors_name_the_row_of_the_whole_input(monkeypatch):
    bodies = BODIES.copy()
    bodies[9] = "Notastar"
    monkeypatch.setattr(red, "CHUNK_SIGHTS", 3)
    with pytest.raises(NavInputError) as err:
        red.reduce_sights(bodies, T, HS, **KW)
    assert err.value.row == 10 and err.value.field == "body"
    with pytest.raises(NavInputError) as err:
        list(red.iter_reduce_sights(bodies, T, HS, chunk=4, **KW))
    assert err.value.row == 10
