#!/usr/bin/python3
"""Angular separations for SameTransientTests, computed with astropy (Debian python3-astropy 5.2.1).

Run: /usr/bin/python3 separation_fixtures.py  — prints the C# InlineData rows pasted into SameTransientTests.cs.
The pairs are made up to cover what cross-matching meets: sub-arcsecond offsets, the 0/360° wrap in right
ascension, a pole, and large angles.
"""
from astropy.coordinates import SkyCoord
import astropy.units as u

PAIRS = [
    (150.0, 2.2, 150.0, 2.2 + 1.0 / 3600),            # 1″ north
    (150.0, 2.2, 150.0 + 0.4 / 3600, 2.2 + 0.3 / 3600),  # 0.5″ on a slant
    (359.99995, -30.0, 0.00010, -30.00002),           # across RA 0
    (12.0, 89.9999, 192.0, 89.9999),                  # over the north pole
    (80.0, -69.5, 80.001, -69.5),                     # RA step shrunk by cos(dec)
    (213.9154, 19.1825, 201.2983, -11.1614),          # tens of degrees
    (10.0, 0.0, 190.0, 0.0),                          # antipodes
]

for ra1, dec1, ra2, dec2 in PAIRS:
    sep = SkyCoord(ra1 * u.deg, dec1 * u.deg, frame="icrs").separation(SkyCoord(ra2 * u.deg, dec2 * u.deg, frame="icrs"))
    print(f"    [InlineData({ra1!r}, {dec1!r}, {ra2!r}, {dec2!r}, {sep.to(u.arcsec).value!r})]")
