#!/usr/bin/python3
"""Reference value for NoiseAccountingTests.DerSnrNoise_MatchesNumpyReference.

The DER_SNR noise estimate (Stoehr et al. 2008, ASP Conf. Ser. 394, 505, eq. 2),
computed with numpy (Debian python3-numpy) on a deterministic signal that the C# test rebuilds:
    f_i = 2 + 0.3 sin(i / 15) + 0.05 (frac(sin(i * 12.9898) * 43758.5453) - 0.5),  i = 0 .. 999
Run: /usr/bin/python3 der_snr_reference.py
"""
import numpy as np

i = np.arange(1000, dtype=float)
noise = np.modf(np.sin(i * 12.9898) * 43758.5453)[0]
noise = np.where(noise < 0, noise + 1, noise)  # frac() in [0, 1)
f = 2 + 0.3 * np.sin(i / 15) + 0.05 * (noise - 0.5)
d = np.abs(2.0 * f[2:-2] - f[0:-4] - f[4:])
print(repr(1.482602 / np.sqrt(6.0) * np.median(d)))
