#!/usr/bin/python3
# Generates the check values of SexagesimalTests with Debian's python3-astropy (5.2.1).
from astropy.coordinates import Angle
import astropy.units as u

for ra, dec in [(198.378137, -7.783812), (10.684708, 41.26875), (358.76807, -31.98185), (0.0, -89.99999), (359.9999999, 0.0)]:
    print(ra, dec,
          Angle(ra * u.deg).to_string(unit=u.hour, sep=':', precision=2, pad=True),
          Angle(dec * u.deg).to_string(unit=u.deg, sep=':', precision=1, alwayssign=True, pad=True))
