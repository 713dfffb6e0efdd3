#!/usr/bin/python3
"""Independent reference of Triage's calibration study, for speed and accuracy comparisons (issue 11).

Written from the description in docs/calibration.md, not from Triage's code, with Debian's
python3-numpy, python3-scipy and python3-sklearn:
  * degradation: one FFT per spectrum on the input grid (uniform in ln lambda), batched over all
    spectra that share a grid: g = f*lambda, multiplied by the Gaussian transfer function
    exp(-2 pi^2 sigma_k^2 nu^2) with sigma_k^2 = sigma(R)^2 - sigma(R0)^2, then binned flux-conservingly
    (cumulative integral) onto a log grid of 2 pixels per element;
  * noise: Gaussian for S/N per element at 6000 A (sigma_pix = sqrt(2) f_6000 / S), shaped like the
    error column (the synthetic library is noise-free with an error column);
  * features: de-redshift, rebin onto 3600-8600 A rest (at most 200 log bins), divide by the mean;
  * classifier: PCA (at most 40 components) + multinomial logistic regression with balanced class
    weights; folds: StratifiedGroupKFold grouped by object.

Usage:
  /usr/bin/python3 bench/reference/study.py --library LIB [--cache DIR] [--speed 5,10,50,300,1500,4000]
        [--resolutions 5,9.2,17,...,4000 (Triage's default grid)] [--snr 5,10,20] [--folds 5] [--repeat 3] [--skip-study]
Prints spectra/s of the degradation at each --speed R, then the study's accuracy table and wall times.
"""
import argparse, csv, hashlib, os, time
import numpy as np
import scipy.fft
from sklearn.decomposition import PCA
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import StratifiedGroupKFold
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler

FWHM_PER_SIGMA = 2 * np.sqrt(2 * np.log(2))


def read_spectrum(path):
    """Columns wavelength, flux[, error] of a text spectrum: comment lines dropped, then one C-level parse
    (np.fromstring in text mode) instead of np.loadtxt's line-by-line Python loop."""
    with open(path) as fh:
        text = fh.read()
    if "#" in text:
        text = "\n".join(l for l in text.splitlines() if not l.lstrip().startswith("#"))
    first = next(l for l in text.splitlines() if l.strip())
    cols = len(first.split())
    return np.fromstring(text, sep=" ").reshape(-1, cols)


def load(folder, cache=None):
    """The library's rows. With cache=DIR, the parsed arrays are kept in DIR/<sha256>.npz keyed by the content of
    the manifest and every spectrum file (the same idea as Triage's cache; a changed file gives another key)."""
    with open(os.path.join(folder, "manifest.csv")) as fh:
        lines = [l for l in fh if not l.startswith("#") and l.strip()]
    meta = list(csv.DictReader(lines))
    path = None
    if cache:
        h = hashlib.sha256()
        with open(os.path.join(folder, "manifest.csv"), "rb") as fh:
            h.update(fh.read())
        for r in meta:
            with open(os.path.join(folder, r["file"]), "rb") as fh:
                h.update(r["file"].encode()); h.update(hashlib.sha256(fh.read()).digest())
        path = os.path.join(cache, h.hexdigest() + ".npz")
    if path and os.path.exists(path):
        z = np.load(path)
        W, F, E = z["w"], z["f"], (z["e"] if "e" in z else None)
        arrays = [(W[i], F[i], None if E is None else E[i]) for i in range(len(meta))]
    else:
        arrays = []
        for r in meta:
            data = read_spectrum(os.path.join(folder, r["file"]))
            arrays.append((data[:, 0], data[:, 1], data[:, 2] if data.shape[1] > 2 else None))
        # The cache stores one 2-D array per column, so only libraries whose spectra share a length are cached.
        if path and len({len(a[0]) for a in arrays}) == 1:
            os.makedirs(cache, exist_ok=True)
            out = dict(w=np.array([a[0] for a in arrays]), f=np.array([a[1] for a in arrays]))
            if all(a[2] is not None for a in arrays):
                out["e"] = np.array([a[2] for a in arrays])
            np.savez(path + ".tmp.npz", **out)
            os.replace(path + ".tmp.npz", path)
    return [dict(obj=r["object_id"], sub=r["subtype"], z=float(r["redshift"]),
                 r0=float(r["source_resolution"]) if r.get("source_resolution") else None,
                 w=w, f=f, e=e) for r, (w, f, e) in zip(meta, arrays)]


def degrade_batch(w, F, r, r0, chunk=128):
    """F: (n_spectra, n_pixels) on the shared grid w (uniform in ln lambda). Returns (centres, binned).
    Works through the rows in chunks so that the complex spectra stay small (2,430 rows at once take ~0.4 GB)."""
    parts = [degrade_rows(w, F[i:i + chunk], r, r0) for i in range(0, F.shape[0], chunk)]
    return parts[0][0], np.concatenate([p[1] for p in parts])


def degrade_rows(w, F, r, r0):
    x = np.log(w)
    step = (x[-1] - x[0]) / (len(x) - 1)
    sig_t = 1 / (r * FWHM_PER_SIGMA)
    sig_s = 0 if r0 is None else 1 / (r0 * FWHM_PER_SIGMA)
    k2 = sig_t ** 2 - sig_s ** 2
    g = F * w
    if k2 > 0:
        n = len(x)
        # Edge padding of 5 sigma (at most the spectrum's length) against wrap-around, to a length the FFT likes.
        pad = int(min(n, np.ceil(5 * np.sqrt(k2) / step)))
        size = scipy.fft.next_fast_len(n + 2 * pad, real=True)
        gp = np.pad(g, ((0, 0), (pad, size - n - pad)), mode="edge")
        nu = np.fft.rfftfreq(size)
        transfer = np.exp(-2 * np.pi ** 2 * (k2 / step ** 2) * nu ** 2)
        g = scipy.fft.irfft(scipy.fft.rfft(gp, axis=1) * transfer, n=size, axis=1)[:, pad:pad + n]
    f = g / w
    # Flux-conserving binning: input pixels as bins with edges at the geometric midpoints.
    edges = np.exp(np.concatenate([[x[0] - step / 2], (x[:-1] + x[1:]) / 2, [x[-1] + step / 2]]))
    cum = np.concatenate([np.zeros((f.shape[0], 1)), np.cumsum(f * np.diff(edges), axis=1)], axis=1)
    out_step = 1 / (2 * r)
    m = int(np.floor(np.log(w[-1] / w[0]) / out_step + 1e-9))
    out_edges = w[0] * np.exp(out_step * np.arange(m + 1))
    # The output edges lie inside the input edges: one searchsorted for all rows, then linear interpolation.
    j = np.clip(np.searchsorted(edges, out_edges) - 1, 0, len(edges) - 2)
    t = (out_edges - edges[j]) / (edges[j + 1] - edges[j])
    c = cum[:, j] * (1 - t) + cum[:, j + 1] * t
    return np.sqrt(out_edges[:-1] * out_edges[1:]), np.diff(c, axis=1) / np.diff(out_edges)


def level_6000(centres, binned):
    win = np.abs(centres - 6000) <= 300
    if win.sum() >= 5:
        return np.median(binned[:, win], axis=1)
    return np.array([np.interp(6000, centres, row) for row in binned])


def features(centres, binned, z, r, bins_max=200):
    n = int(np.clip(round(r * 2 * np.log(8600 / 3600)), 4, bins_max))
    rest_edges = 3600 * np.exp(np.log(8600 / 3600) / n * np.arange(n + 1))
    out = np.empty((binned.shape[0], n))
    step = np.log(centres[1] / centres[0])
    edges = np.exp(np.concatenate([[np.log(centres[0]) - step / 2], np.log(centres) + step / 2]))
    for i in range(binned.shape[0]):
        e = edges / (1 + z[i])
        row = np.nan_to_num(binned[i])
        cum = np.concatenate([[0], np.cumsum(row * np.diff(e))])
        c = np.interp(rest_edges, e, cum)
        v = np.diff(c) / np.diff(rest_edges)
        out[i] = v / max(abs(v.mean()), 1e-12)
    return out


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--library", required=True)
    ap.add_argument("--speed", default="5,10,50,300,1500,4000")
    ap.add_argument("--resolutions", default="5,9.2,17,31,57,104,192,352,646,1190,2180,4000")
    ap.add_argument("--snr", default="5,10,20")
    ap.add_argument("--folds", type=int, default=5)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--skip-study", action="store_true")
    ap.add_argument("--cache", default=None, help="folder of the parsed-library cache (default: none, parse every run)")
    a = ap.parse_args()
    t0 = time.perf_counter()
    rows = load(a.library, a.cache)
    t_load = time.perf_counter() - t0
    w = rows[0]["w"]
    assert all(len(r["w"]) == len(w) and np.allclose(r["w"], w, rtol=1e-6) for r in rows), "the batched path needs one shared grid"
    F = np.array([r["f"] for r in rows])
    E = np.array([r["e"] for r in rows]) if rows[0]["e"] is not None else None
    r0 = rows[0]["r0"]
    print(f"loaded {len(rows)} spectra of {len(w)} pixels in {t_load:.1f} s")
    for r in [float(v) for v in a.speed.split(",")]:
        best = np.inf
        for _ in range(a.repeat):
            t = time.perf_counter()
            degrade_batch(w, F, r, r0)
            best = min(best, time.perf_counter() - t)
        print(f"degrade R={r:g}: {len(rows) / best:,.0f} spectra/s (best of {a.repeat}, {best:.2f} s)")
    if a.skip_study:
        return
    t_study = time.perf_counter()
    subs = np.array([r["sub"] for r in rows]); objs = np.array([r["obj"] for r in rows]); z = np.array([r["z"] for r in rows])
    labels = {s: i for i, s in enumerate(sorted(set(subs)))}; y = np.array([labels[s] for s in subs])
    folds = list(StratifiedGroupKFold(n_splits=a.folds, shuffle=True, random_state=1).split(F, y, objs))
    rng = np.random.default_rng(1)
    print("R, S/N, accuracy, balanced accuracy")
    for r in [float(v) for v in a.resolutions.split(",")]:
        centres, binned = degrade_batch(w, F, r, r0)
        lev = np.abs(level_6000(centres, binned))
        shape = None
        if E is not None:
            _, ev = degrade_batch(w, E ** 2, r, None)  # variance density shape (approximate), normalised at 6000 A
            shape = np.sqrt(np.abs(ev)); shape /= level_6000(centres, shape)[:, None]
        for s in [float(v) for v in a.snr.split(",")]:
            sigma = np.sqrt(2) * lev / s
            noisy = binned + sigma[:, None] * (shape if shape is not None else 1) * rng.standard_normal(binned.shape)
            X = features(centres, noisy, z, r)
            pred = np.empty_like(y)
            for train, test in folds:
                model = make_pipeline(StandardScaler(), PCA(n_components=min(40, X.shape[1]), random_state=1),
                                      LogisticRegression(max_iter=300, class_weight="balanced"))
                model.fit(X[train], y[train])
                pred[test] = model.predict(X[test])
            recalls = [np.mean(pred[y == c] == c) for c in range(len(labels))]
            print(f"{r:g}, {s:g}, {np.mean(pred == y):.3f}, {np.mean(recalls):.3f}", flush=True)
    print(f"study wall {time.perf_counter() - t_study:.1f} s (+ {t_load:.1f} s loading)")


if __name__ == "__main__":
    main()
