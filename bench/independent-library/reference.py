#!/usr/bin/python3
"""A small independent reference classifier study for libraries on arbitrary wavelength grids.

Used in docs/calibration.md ("Low R") to compare Triage's accuracy per R with a second implementation on
the independent library of generate.py (whose spectra have linear, per-spectrum wavelength grids, which
bench/reference/study.py does not read). Written from the description of the study, not from Triage's code:
  * degradation: resample each spectrum flux-conservingly (cumulative integral) onto a grid uniform in
    ln lambda at 4 pixels per source element, Gaussian-smooth in ln lambda with
    sigma_k^2 = sigma(R)^2 - sigma(R0)^2 (scipy.ndimage.gaussian_filter1d), bin to 2 pixels per element;
  * features: de-redshift with the manifest redshift, rebin onto 3600-8600 A rest (2 pixels per element,
    4 to 200 bins), divide by the mean, keep the shape (no continuum division);
  * classifier: standardise, PCA (at most 40 components), multinomial logistic regression with balanced
    class weights (scikit-learn); 5 folds with StratifiedGroupKFold grouped by object, seed 1.
Only the native S/N of the library is used (no noise added).

Usage: /usr/bin/python3 bench/independent-library/reference.py --library DIR [--resolutions 5,8.4,14,24,67,300]
Needs Debian python3-numpy, python3-scipy, python3-sklearn.
"""
import argparse
import csv
import os

import numpy as np
from scipy.ndimage import gaussian_filter1d
from sklearn.decomposition import PCA
from sklearn.linear_model import LogisticRegression
from sklearn.model_selection import StratifiedGroupKFold
from sklearn.pipeline import make_pipeline
from sklearn.preprocessing import StandardScaler

FWHM_PER_SIGMA = 2 * np.sqrt(2 * np.log(2))


def load(folder):
    with open(os.path.join(folder, "manifest.csv")) as fh:
        lines = [l for l in fh if not l.startswith("#") and l.strip()]
    rows = []
    for r in csv.DictReader(lines):
        d = np.loadtxt(os.path.join(folder, r["file"]), comments="#")
        rows.append(dict(obj=r["object_id"], sub=r["subtype"], z=float(r["redshift"]),
                         r0=float(r["source_resolution"]), w=d[:, 0], f=d[:, 1]))
    return rows


def rebin(w, f, edges):
    """Flux-conserving average of f (samples at w, treated as bins) over the given edges."""
    mid = np.concatenate([[w[0] - (w[1] - w[0]) / 2], (w[:-1] + w[1:]) / 2, [w[-1] + (w[-1] - w[-2]) / 2]])
    cum = np.concatenate([[0], np.cumsum(f * np.diff(mid))])
    c = np.interp(edges, mid, cum, left=np.nan, right=np.nan)
    return np.diff(c) / np.diff(edges)


def degrade(w, f, r, r0):
    step = 1 / (4 * r0)
    n = int(np.log(w[-1] / w[0]) / step)
    edges = w[0] * np.exp(step * np.arange(n + 1))
    g = rebin(w, f, edges)
    centres = np.sqrt(edges[:-1] * edges[1:])
    k2 = (1 / (r * FWHM_PER_SIGMA)) ** 2 - (1 / (r0 * FWHM_PER_SIGMA)) ** 2
    if k2 > 0:
        g = gaussian_filter1d(g, np.sqrt(k2) / step, mode="nearest")
    out_step = 1 / (2 * r)
    m = max(2, int(np.log(centres[-1] / centres[0]) / out_step))
    out_edges = centres[0] * np.exp(out_step * np.arange(m + 1))
    return np.sqrt(out_edges[:-1] * out_edges[1:]), rebin(centres, g, out_edges)


def features(w, f, z, r):
    n = int(np.clip(round(r * 2 * np.log(8600 / 3600)), 4, 200))
    edges = 3600 * np.exp(np.log(8600 / 3600) / n * np.arange(n + 1))
    ok = np.isfinite(f)
    v = rebin(w[ok] / (1 + z), f[ok], edges)
    good = np.isfinite(v)
    v = np.interp(np.arange(n), np.flatnonzero(good), v[good])  # edges: nearest covered value
    return v / np.mean(v)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--library", required=True)
    ap.add_argument("--resolutions", default="5,8.4,14,24,67,300")
    a = ap.parse_args()
    rows = load(a.library)
    labels = np.array([r["sub"] for r in rows])
    groups = np.array([r["obj"] for r in rows])
    classes = sorted(set(labels))
    print(f"{len(rows)} spectra, {len(set(groups))} objects")
    print("R     accuracy  mean_recall")
    for r in [float(x) for x in a.resolutions.split(",")]:
        X = np.array([features(*degrade(s["w"], s["f"], r, s["r0"]), s["z"], r) for s in rows])
        pred = np.empty(len(rows), dtype=object)
        for train, test in StratifiedGroupKFold(n_splits=5, shuffle=True, random_state=1).split(X, labels, groups):
            model = make_pipeline(StandardScaler(), PCA(n_components=min(40, X.shape[1], len(train) - 1)),
                                  LogisticRegression(max_iter=2000, class_weight="balanced"))
            model.fit(X[train], labels[train])
            pred[test] = model.predict(X[test])
        acc = np.mean(pred == labels)
        recall = np.mean([np.mean(pred[labels == c] == c) for c in classes])
        print(f"{r:<6g}{acc:9.3f}{recall:12.3f}")


if __name__ == "__main__":
    main()
