"""Coverage of 95 % intervals for a proportion measured on clustered (object-level) data.

Prototype behind docs/calibration.md ("Intervals count objects"): objects draw their own success
probability from Beta(p(1/rho-1), (1-p)(1/rho-1)) (intra-object correlation rho), then each of their
1..m spectra succeeds independently. Compares (a) a percentile cluster bootstrap (500 draws),
(b) Wilson on the effective n with z = 1.96, (c) Wilson on the effective n with Student t(G-1).
Run: /usr/bin/python3 bench/statistics/interval_coverage.py   (Debian python3-numpy, python3-scipy)
"""
import numpy as np
from scipy import stats

rng = np.random.default_rng(2)
Z = stats.norm.ppf(0.975)


def wilson(p, n, z):
    d = 1 + z * z / n
    c = (p + z * z / (2 * n)) / d
    h = z / d * np.sqrt(p * (1 - p) / n + z * z / (4 * n * n))
    return c - h, c + h


def trial(G, p, rho, mmax, boot=500):
    m = rng.integers(1, mmax + 1, G)
    a, b = p * (1 / rho - 1), (1 - p) * (1 / rho - 1)
    k = rng.binomial(m, rng.beta(a, b, G))
    n = m.sum()
    ph = k.sum() / n
    r = k - ph * m
    vc = G / (G - 1) * np.sum(r * r) / n / n
    vb = ph * (1 - ph) / n
    deff = min(max(vc / vb, 1), n / G) if vb > 0 else n / G
    idx = rng.integers(0, G, (boot, G))
    pb = k[idx].sum(1) / m[idx].sum(1)
    blo, bhi = np.percentile(pb, [2.5, 97.5])
    zlo, zhi = wilson(ph, n / deff, Z)
    tlo, thi = wilson(ph, n / deff, stats.t.ppf(0.975, G - 1))
    return blo <= p <= bhi, zlo <= p <= zhi, tlo <= p <= thi


if __name__ == "__main__":
    print("objects p rho max_spectra | bootstrap wilson_z wilson_t")
    for G, p, rho, mm in [(8, 0.5, 0.3, 8), (10, 0.7, 0.3, 8), (15, 0.5, 0.3, 8), (30, 0.5, 0.3, 8), (30, 0.8, 0.3, 8),
                          (60, 0.7, 0.5, 8), (20, 0.9, 0.2, 6), (40, 0.6, 0.1, 10), (25, 0.3, 0.4, 8), (12, 0.85, 0.3, 8)]:
        res = np.array([trial(G, p, rho, mm) for _ in range(4000)])
        print(G, p, rho, mm, "|", " ".join(f"{v:.3f}" for v in res.mean(0)))
