"""Named units, so that no tolerance or conversion is a bare number.

Angles are carried in degrees; distances at sea in nautical miles (one minute of arc of a great
circle on the navigator's sphere is one nautical mile, by the definition the trade uses).
"""

import math

ARCMIN_DEG = 1.0 / 60.0          # one minute of arc, in degrees
ARCSEC_DEG = 1.0 / 3600.0        # one second of arc, in degrees
NMI_M = 1852.0                   # the international nautical mile (1929), metres
NMI_PER_DEG = 60.0               # one degree of great circle on the navigator's sphere
EARTH_RADIUS_NMI = NMI_PER_DEG * 180.0 / math.pi   # 3437.75 nmi: the sphere on which 1′ = 1 nmi
SECONDS_PER_DAY = 86_400.0
KNOT_NMI_PER_H = 1.0
