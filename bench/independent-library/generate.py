#!/usr/bin/env python3
"""An independent labelled spectral library for checking Triage's calibration.

Written separately from Triage's own generator (src/Triage.Core/Spectra/Synthetic), with different physics
choices, so that accuracy measured on it does not simply reflect Triage's own assumptions:

* wavelength grid LINEAR in Å (1.5 Å pixels) and a line-spread function of constant FWHM in Å (4 Å: a grating
  spectrograph; R = λ/4 Å, 850 at 3400 Å … 2450 at 9800 Å; the manifest states the lowest, 850);
* coverage varies per spectrum (blue edge 3400–3900 Å, red edge 8900–9800 Å);
* continuum: a blackbody with a UV line-blanketing cut-off exp(-(λ_b/λ)^4) (λ_b per subtype) and dust
  extinction with a power law A_λ ∝ (5500/λ)^1.4 (not a CCM/Fitzpatrick curve);
* lines: P-Cygni profiles with a flat-bottomed (box) absorption trough from -v_max to -v_phot in velocity,
  smoothed, and a parabolic emission component at rest; v_phot falls as t^-0.25 from explosion;
  each line's strength follows its own Gaussian envelope in time;
* narrow lines (IIn, Ibn, Ia-CSM) as Lorentzians of 400–1200 km/s FWHM;
* host: an old stellar population with a 4000 Å break plus HII-region lines (Hα, [N II], [O III], Hβ,
  [S II]) at the host redshift; its share grows as the transient fades (0.025 mag/day after peak);
* noise: photon-like, σ ∝ √(object + sky), sky with OH-like emission lines redward of 6800 Å,
  S/N per 1.5 Å pixel at 6000 Å between 8 and 40; error column written;
* telluric O2 A and B bands (7600, 6870 Å) left as residuals of random depth;
* de-redshifting information: the manifest's redshift carries an error of 0.003 (σ), as a broker's would.

Line rest wavelengths (Å, air) from memory of standard line lists (common practice); velocities, strengths
and rates are invented for this test, not fitted to any observation. INVENTED DATA, not observations.

Usage: /usr/bin/python3 bench/independent-library/generate.py --out /tmp/indep-lib [--objects 220] [--seed 7]
Needs only numpy (Debian python3-numpy).
"""
import argparse
import os

import numpy as np

C = 299792.458
H_PLANCK_OVER_K = 1.438777e8  # hc/k in Å·K

# (rest Å, name) groups
HALPHA, HBETA, HGAMMA = 6562.8, 4861.3, 4340.5
HE5876, HE6678, HE7065, HE4471 = 5875.6, 6678.2, 7065.2, 4471.5
SI6355, SI5972, SII_W1, SII_W2 = 6355.0, 5972.0, 5454.0, 5640.0
CA_HK, CA_IR, O7774, NA_D = 3945.0, 8579.0, 7774.0, 5892.0
FE5169, FE4924, TI4400, O_II_4115, O_II_4357, O_II_4650 = 5169.0, 4924.0, 4400.0, 4115.0, 4357.0, 4650.0
MG4481 = 4481.0

# subtype: share, T_peak, T_late, λ_b (UV cut), v_phot at peak (km/s), phase range, lines
# line: (rest, peak strength, envelope centre (days from peak), envelope width (days), kind) kind: 'p' P-Cygni, 'n' narrow emission
SUBTYPES = {
    "Ia": (0.28, 11000, 6500, 3900, 11500, (-14, 60), [
        (SI6355, 0.55, 0, 25, "p"), (SI5972, 0.12, -3, 15, "p"), (SII_W1, 0.2, -2, 10, "p"), (SII_W2, 0.2, -2, 10, "p"),
        (CA_HK, 0.6, 5, 40, "p"), (CA_IR, 0.5, 30, 40, "p"), (FE5169, 0.25, 25, 25, "p"), (MG4481, 0.2, 5, 20, "p")]),
    "Ia-91T-like": (0.05, 13500, 7000, 3700, 11000, (-12, 50), [
        (SI6355, 0.25, 8, 20, "p"), (CA_HK, 0.25, 10, 30, "p"), (FE5169, 0.35, 0, 20, "p"), (4404.0, 0.35, -5, 12, "p"),
        (CA_IR, 0.4, 30, 40, "p")]),
    "Ia-91bg-like": (0.05, 8000, 5500, 4300, 10000, (-6, 50), [
        (SI6355, 0.6, 0, 25, "p"), (TI4400, 0.7, 5, 30, "p"), (SI5972, 0.35, 0, 20, "p"), (CA_IR, 0.6, 15, 40, "p"),
        (O7774, 0.2, 0, 15, "p")]),
    "Iax": (0.045, 9500, 6000, 4000, 6000, (-8, 45), [
        (SI6355, 0.25, -2, 12, "p"), (FE5169, 0.35, 10, 30, "p"), (CA_IR, 0.4, 20, 30, "p"), (CA_HK, 0.35, 5, 30, "p"),
        (FE4924, 0.2, 10, 25, "p")]),
    "Ia-CSM": (0.04, 10000, 7000, 3900, 10000, (-5, 60), [
        (SI6355, 0.2, 0, 20, "p"), (FE5169, 0.2, 10, 25, "p"), (HALPHA, 1.2, 20, 60, "n"), (HBETA, 0.3, 20, 60, "n")]),
    "Ib": (0.05, 9500, 6000, 4100, 9000, (-10, 50), [
        (HE5876, 0.5, 10, 25, "p"), (HE6678, 0.2, 10, 20, "p"), (HE7065, 0.25, 12, 20, "p"), (HE4471, 0.2, 5, 20, "p"),
        (CA_IR, 0.5, 25, 40, "p"), (O7774, 0.25, 10, 30, "p"), (FE5169, 0.2, 10, 25, "p")]),
    "Ibn": (0.04, 12000, 8000, 3800, 3000, (-5, 30), [
        (HE5876, 1.0, 5, 20, "n"), (HE6678, 0.4, 5, 20, "n"), (HE7065, 0.5, 5, 20, "n"), (HE4471, 0.3, 0, 20, "n")]),
    "Ic": (0.06, 9000, 5800, 4200, 9500, (-10, 50), [
        (O7774, 0.5, 5, 30, "p"), (CA_IR, 0.6, 20, 40, "p"), (FE5169, 0.3, 5, 25, "p"), (SI6355, 0.15, -3, 15, "p"),
        (CA_HK, 0.4, 5, 30, "p")]),
    "Ic-BL": (0.04, 9500, 6000, 4200, 20000, (-10, 40), [
        (O7774, 0.35, 5, 30, "p"), (CA_IR, 0.45, 15, 40, "p"), (FE5169, 0.35, 5, 25, "p"), (CA_HK, 0.3, 0, 30, "p")]),
    "IIb": (0.05, 10000, 6000, 4000, 10000, (-12, 50), [
        (HALPHA, 0.5, -8, 15, "p"), (HBETA, 0.3, -8, 12, "p"), (HE5876, 0.4, 15, 25, "p"), (HE6678, 0.2, 15, 20, "p"),
        (HE7065, 0.2, 15, 20, "p"), (CA_IR, 0.4, 25, 40, "p")]),
    "II": (0.2, 12000, 5500, 3700, 8000, (-5, 100), [
        (HALPHA, 0.8, 30, 80, "p"), (HBETA, 0.4, 20, 60, "p"), (HGAMMA, 0.25, 15, 40, "p"), (FE5169, 0.3, 45, 50, "p"),
        (NA_D, 0.3, 50, 50, "p"), (CA_IR, 0.4, 50, 50, "p")]),
    "IIn": (0.05, 11000, 8000, 3700, 3000, (-10, 80), [
        (HALPHA, 2.0, 10, 80, "n"), (HBETA, 0.6, 10, 60, "n"), (HGAMMA, 0.3, 10, 40, "n"), (HE5876, 0.15, 10, 30, "n")]),
    "SLSN-I": (0.04, 15000, 9000, 3500, 12000, (-20, 60), [
        (O_II_4115, 0.25, -10, 15, "p"), (O_II_4357, 0.3, -10, 15, "p"), (O_II_4650, 0.3, -10, 15, "p"),
        (FE5169, 0.3, 25, 30, "p"), (CA_IR, 0.3, 40, 40, "p"), (O7774, 0.25, 10, 30, "p")]),
    "SLSN-II": (0.035, 14000, 8500, 3500, 6000, (-20, 70), [
        (HALPHA, 0.6, 10, 60, "n"), (HBETA, 0.2, 10, 50, "n"), (HALPHA, 0.3, 30, 60, "p")]),
}

SKY_LINES = np.array([6863.9, 7316.3, 7340.9, 7750.6, 7794.1, 7913.7, 7993.3, 8344.6, 8399.2, 8430.2, 8827.1,
                      8885.8, 8919.6, 8958.1, 9001.1, 9375.9, 9439.7])
HOST_LINES = [(HALPHA, 1.0), (6583.4, 0.35), (6548.0, 0.12), (5006.8, 0.5), (4958.9, 0.17), (HBETA, 0.3),
              (6716.4, 0.2), (6730.8, 0.15), (3727.0, 0.5)]


def planck(lam, t):
    x = H_PLANCK_OVER_K / (lam * t)
    return 1.0 / (lam ** 5 * np.expm1(np.minimum(x, 700)))


def pcygni(lam_rest, rest, strength, v_phot, v_max):
    """Flat-bottomed absorption trough in velocity from -v_max to -v_phot plus parabolic emission."""
    v = (lam_rest / rest - 1.0) * C
    edge = 0.12 * v_phot
    trough = 1.0 / (1.0 + np.exp(np.clip((v + v_phot) / edge, -50, 50))) / (1.0 + np.exp(np.clip(-(v + v_max) / edge, -50, 50)))
    emission = np.clip(1.0 - (v / v_phot) ** 2, 0, None)
    return -strength * trough + 0.6 * strength * emission


def lorentz(lam_rest, rest, strength, fwhm_kms):
    gamma = rest * fwhm_kms / C / 2.0
    return strength * gamma ** 2 / ((lam_rest - rest) ** 2 + gamma ** 2)


def transient(lam_rest, subtype, phase, rng_obj):
    share, t_peak, t_late, lam_b, v0, _, lines = SUBTYPES[subtype]
    scale = rng_obj["tscale"]
    t = t_late + (t_peak - t_late) * np.exp(-max(phase, 0) / (25.0 * scale)) if phase >= 0 else t_peak * (1 - 0.01 * phase)
    cont = planck(lam_rest, t) * np.exp(-(lam_b / lam_rest) ** 4)
    cont /= np.interp(6000.0, lam_rest, cont)
    t_expl = phase + 18.0 * scale
    v_phot = rng_obj["v"] * (max(t_expl, 2.0) / 18.0) ** -0.25
    profile = np.zeros_like(lam_rest)
    for i, (rest, s, centre, width, kind) in enumerate(lines):
        amp = s * rng_obj["strengths"][i] * np.exp(-0.5 * ((phase - centre) / width) ** 2)
        if kind == "p":
            profile += pcygni(lam_rest, rest, amp, v_phot, 1.8 * v_phot)
        else:
            profile += lorentz(lam_rest, rest, amp, rng_obj["narrow"])
    return cont * np.clip(1.0 + profile, 0.02, None)


def host_spectrum(lam_rest, starforming):
    old = planck(lam_rest, 4500.0) * np.where(lam_rest < 4000.0, 0.55, 1.0)
    old /= np.interp(6000.0, lam_rest, old)
    if starforming:
        for rest, s in HOST_LINES:
            old = old + lorentz(lam_rest, rest, 0.8 * s, 150.0)
    return old


def convolve_constant_fwhm(lam, flux, fwhm):
    step = lam[1] - lam[0]
    sigma = fwhm / 2.3548 / step
    half = int(np.ceil(5 * sigma))
    x = np.arange(-half, half + 1)
    k = np.exp(-0.5 * (x / sigma) ** 2)
    k /= k.sum()
    return np.convolve(np.pad(flux, half, mode="edge"), k, mode="valid")


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--out", required=True)
    ap.add_argument("--objects", type=int, default=220)
    ap.add_argument("--seed", type=int, default=7)
    a = ap.parse_args()
    rng = np.random.default_rng(a.seed)
    names = list(SUBTYPES)
    shares = np.array([SUBTYPES[s][0] for s in names])
    counts = np.maximum(8, np.round(a.objects * shares / shares.sum()).astype(int))
    plan = rng.permutation(np.repeat(np.arange(len(names)), counts))
    os.makedirs(os.path.join(a.out, "spectra"), exist_ok=True)
    step, fwhm = 1.5, 4.0
    fine = np.arange(3300.0, 9900.0, step / 3)  # fine grid before the LSF and pixel binning
    rows = []
    for i, si in enumerate(plan):
        subtype = names[si]
        share, _, _, _, v0, (p_from, p_to), lines = SUBTYPES[subtype]
        obj = f"IND-{i + 1:04d}"
        z = 0.01 + 0.07 * rng.random() ** 0.5
        props = {
            "tscale": np.exp(0.15 * rng.standard_normal()),
            "v": v0 * np.exp(0.2 * rng.standard_normal()),
            "strengths": np.exp(0.5 * rng.standard_normal(len(lines))),
            "narrow": 400 + 800 * rng.random(),
        }
        ebv = rng.exponential(0.15)
        starforming = rng.random() < 0.6
        host0 = 0.6 * rng.random()
        snr_pix = 8 * np.exp(np.log(5) * rng.random())
        n_spec = int(np.clip(rng.poisson(4.5), 2, 12))
        phases = np.unique(np.round(rng.uniform(p_from, p_to, n_spec), 2))  # one spectrum per phase
        z_reported = max(0.0, z + 0.003 * rng.standard_normal())  # one broker-like redshift per object
        for e, phase in enumerate(phases):
            lam_rest = fine / (1 + z)
            sn = transient(lam_rest, subtype, phase, props)
            fade = 10 ** (-0.4 * 0.025 * max(phase, 0))
            host = host0 / max(fade, 1e-3) * host_spectrum(lam_rest, starforming)
            flux = sn + host  # both normalised to 1 at 6000 Å (rest); the host's share grows as the transient fades
            flux = flux * 10 ** (-0.4 * 3.1 * ebv * (5500.0 / fine) ** 1.4)
            # telluric residuals (observed frame)
            for centre, width in ((7605.0, 25.0), (6875.0, 12.0)):
                flux = flux * (1 - rng.uniform(0.0, 0.15) * np.exp(-0.5 * ((fine - centre) / width) ** 2))
            smooth = convolve_constant_fwhm(fine, flux, fwhm)
            lo = rng.uniform(3400, 3900)
            hi = rng.uniform(8900, 9800)
            edges = np.arange(lo, hi, step)
            idx = np.searchsorted(fine, edges)
            binned = np.add.reduceat(smooth, idx[:-1])[: len(edges) - 1] / np.diff(idx)
            lam = 0.5 * (edges[:-1] + edges[1:])
            level = np.interp(6000.0, lam, binned)
            sky = 0.3 * level * (1 + sum(8 * np.exp(-0.5 * ((lam - s) / 2.0) ** 2) for s in SKY_LINES))
            sigma0 = level / snr_pix
            sigma = sigma0 * np.sqrt((np.clip(binned, 0, None) + sky) / (level + 0.3 * level))
            noisy = binned + sigma * rng.standard_normal(len(lam))
            scale = 1e-16 / level
            fname = f"spectra/{obj}_{e + 1:02d}.txt"
            with open(os.path.join(a.out, fname), "w") as fh:
                fh.write("# INVENTED spectrum from bench/independent-library/generate.py (not an observation)\n")
                for l, f, s in zip(lam, noisy * scale, sigma * scale):
                    fh.write(f"{l:.2f} {f:.5g} {s:.4g}\n")
            rows.append((fname, obj, subtype, round(float(phase), 2), round(float(z_reported), 5)))
    with open(os.path.join(a.out, "manifest.csv"), "w") as fh:
        fh.write("# INVENTED library from bench/independent-library/generate.py (not observations)\n")
        fh.write("file,object_id,subtype,phase_days,redshift,source_resolution\n")
        for r in rows:
            fh.write(f"{r[0]},{r[1]},{r[2]},{r[3]},{r[4]},850\n")
    print(f"{len(plan)} objects, {len(rows)} spectra in {a.out}")


if __name__ == "__main__":
    main()
