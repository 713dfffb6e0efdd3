#!/usr/bin/python3
"""Writes the FITS fixtures of the Triage FITS-reader tests and astropy's own reading of each.

Run with Debian's python3-astropy (5.2.1 in Debian 12):  /usr/bin/python3 make_fixtures.py
Valid files are written by astropy.io.fits; astropy's reading of each (astropy.io.fits for the data,
astropy.wcs / WCSLIB for the wavelength solution, including its AWAV -> WAVE translation, and
astropy.units for flux units, with the spectral_density equivalency for F_nu) goes to
expected/<name>.json. Malformed files are assembled card by card below, since astropy refuses to write
most of them; malformed.json names the keyword (or column) each must be refused for.
All spectra are invented (seeded random numbers), not observations.
"""
import gzip
import json
import os

import numpy as np
from astropy.io import fits
from astropy.wcs import WCS
import astropy.units as u

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "expected")
os.makedirs(OUT, exist_ok=True)
rng = np.random.RandomState(20261202)
FLAM = u.erg / u.s / u.cm**2 / u.AA


def flux_shape(n):
    x = np.linspace(0, 1, n)
    return 1.0 + 0.5 * x + 0.4 * np.exp(-0.5 * ((x - 0.4) / 0.02) ** 2) - 0.3 * np.exp(-0.5 * ((x - 0.7) / 0.03) ** 2) \
        + 0.02 * rng.standard_normal(n)


def to_flam(values, unit_text, wave_aa):
    if not unit_text:
        return np.asarray(values, dtype=float)
    unit = u.Unit(unit_text, format="fits")
    return (np.asarray(values, dtype=float) * unit).to(FLAM, equivalencies=u.spectral_density(wave_aa * u.AA)).value


def save(name, wave, flux, err=None, r=None, hdu=None):
    order = np.argsort(wave)
    # Ten significant digits: rounding adds at most 5e-10 relative, far inside the tests' 1e-6.
    def g10(values):
        return [float("%.10g" % v) for v in np.asarray(values)[order]]
    doc = {
        "file": name, "hdu": hdu, "resolving_power": r,
        "wavelength_vacuum_angstrom": g10(wave),
        "flux_erg_s_cm2_angstrom": g10(flux),
        "flux_error": None if err is None else g10(err),
    }
    with open(os.path.join(OUT, name + ".json"), "w") as f:
        json.dump(doc, f, separators=(",", ":"))
        f.write("\n")


def image_expected(name, hdu_index=0, gz=False, hdu_name=None):
    """astropy's reading of an image HDU: first row, WCS pixel -> world (vacuum via WCSLIB's sptr), units."""
    with fits.open(os.path.join(HERE, name)) as hl:
        hdu = hl[hdu_index]
        data = np.asarray(hdu.data, dtype=float)
        row = data.reshape(-1, data.shape[-1])[0]
        w = WCS(hdu.header)
        pix = np.zeros((row.size, w.naxis))
        pix[:, 0] = np.arange(row.size)
        wave_aa = w.wcs_pix2world(pix, 0)[:, 0] * 1e10  # WCSLIB works in SI (m)
        if w.wcs.ctype[0].startswith("AWAV"):
            # Air wavelength of each pixel from WCSLIB, then WCSLIB's own air -> vacuum translation value by value.
            # (Translating the whole axis with sptr() is exact with CDELT1 but keeps a CD1_1 step unchanged in
            # WCSLIB 7.12, which is off by n - 1 ~ 3e-4 per pixel step; observed while writing these fixtures.)
            wave_aa = air_to_vac_wcslib(wave_aa)
        flux = to_flam(row, hdu.header.get("BUNIT"), wave_aa)
        keep = np.isfinite(flux)
        save(name, wave_aa[keep], flux[keep], None, hdu.header.get("SPEC_RP", hl[0].header.get("SPEC_RP")), hdu_name)


def air_to_vac_wcslib(air_aa):
    """Vacuum wavelengths of air wavelengths, computed by WCSLIB through a one-pixel-per-value AWAV axis."""
    air_aa = np.asarray(air_aa, dtype=float)
    h = fits.Header()
    h["NAXIS"] = 1
    h["NAXIS1"] = air_aa.size
    h["CTYPE1"] = "AWAV"
    h["CUNIT1"] = "Angstrom"
    h["CRPIX1"] = 1.0
    h["CDELT1"] = 1.0
    out = np.empty_like(air_aa)
    for i, a in enumerate(air_aa):
        h["CRVAL1"] = a
        w = WCS(h)
        w.wcs.sptr("WAVE-???", 0)
        out[i] = w.wcs_pix2world([[0.0]], 0)[0][0] * 1e10
    return out


def write_valid():
    # 1. Linear vacuum solution in Angstrom, 32-bit floats, scaled F_lambda unit, resolving power in SPEC_RP.
    n = 300
    h = fits.Header()
    h["CTYPE1"] = "WAVE"; h["CUNIT1"] = "Angstrom"; h["CRVAL1"] = 3600.0; h["CDELT1"] = 15.0; h["CRPIX1"] = 1.0
    h["BUNIT"] = "10**(-17) erg/s/cm**2/Angstrom"; h["SPEC_RP"] = 900.0
    fits.PrimaryHDU((120 * flux_shape(n)).astype(np.float32), header=h).writeto(os.path.join(HERE, "linear_vacuum_angstrom.fits"), overwrite=True)
    image_expected("linear_vacuum_angstrom.fits")

    # 2. Log-linear vacuum solution (WAVE-LOG) in nm, 64-bit floats, CRPIX1 off the first pixel, F_lambda in W m-2 nm-1.
    n = 300
    h = fits.Header()
    h["CTYPE1"] = "WAVE-LOG"; h["CUNIT1"] = "nm"; h["CRVAL1"] = 500.0; h["CDELT1"] = 1.2; h["CRPIX1"] = 150.5
    h["BUNIT"] = "W m-2 nm-1"
    fits.PrimaryHDU(3e-15 * flux_shape(n), header=h).writeto(os.path.join(HERE, "loglinear_vacuum_nm.fits"), overwrite=True)
    image_expected("loglinear_vacuum_nm.fits")

    # 3. Air wavelengths (AWAV), linear, step given by CD1_1, no flux unit (relative flux).
    n = 250
    h = fits.Header()
    h["CTYPE1"] = "AWAV"; h["CUNIT1"] = "Angstrom"; h["CRVAL1"] = 4000.0; h["CD1_1"] = 18.0; h["CRPIX1"] = 1.0
    fits.PrimaryHDU(flux_shape(n).astype(np.float32), header=h).writeto(os.path.join(HERE, "air_linear_angstrom.fits"), overwrite=True)
    image_expected("air_linear_angstrom.fits")

    # 4. A 2-D image in micrometres whose first row is the spectrum (the others: sky, error), 64-bit floats.
    n = 200
    rows = np.vstack([flux_shape(n), 0.1 * flux_shape(n), 0.05 * np.ones(n)])
    h = fits.Header()
    h["CTYPE1"] = "WAVE"; h["CUNIT1"] = "um"; h["CRVAL1"] = 0.35; h["CDELT1"] = 0.0025; h["CRPIX1"] = 1.0
    h["CTYPE2"] = "LINEAR"; h["CRVAL2"] = 1.0; h["CDELT2"] = 1.0; h["CRPIX2"] = 1.0
    h["BUNIT"] = "erg s-1 cm-2 Angstrom-1"
    fits.PrimaryHDU(1e-16 * rows, header=h).writeto(os.path.join(HERE, "multirow_micrometre.fits"), overwrite=True)
    image_expected("multirow_micrometre.fits")

    # 5. Scaled 16-bit integers with BLANK pixels (BSCALE, BZERO), linear in Angstrom.
    n = 250
    phys = 2.0 + flux_shape(n)
    stored = np.round((phys - 2.5) / 1e-4).astype(np.int16)
    stored[[17, 18, 125, 249]] = -32768
    h = fits.Header()
    h["CTYPE1"] = "WAVE"; h["CUNIT1"] = "Angstrom"; h["CRVAL1"] = 3500.0; h["CDELT1"] = 20.0; h["CRPIX1"] = 1.0
    hdu = fits.PrimaryHDU(stored, header=h)
    hdu.header["BSCALE"] = 1e-4; hdu.header["BZERO"] = 2.5; hdu.header["BLANK"] = -32768
    hdu.writeto(os.path.join(HERE, "scaled_int16_blank.fits"), overwrite=True)
    image_expected("scaled_int16_blank.fits")

    # 6. Scaled 32-bit integers with BLANK in an IMAGE extension after an empty primary; 8-bit integers too.
    n = 250
    stored = np.round(flux_shape(n) * 1e6).astype(np.int32)
    stored[[0, 100, 101]] = -2147483647
    h = fits.Header()
    h["CTYPE1"] = "WAVE"; h["CUNIT1"] = "Angstrom"; h["CRVAL1"] = 3700.0; h["CDELT1"] = 22.0; h["CRPIX1"] = 0.0
    h["EXTNAME"] = "SCI"; h["SPEC_RP"] = 2500.0
    ext = fits.ImageHDU(stored, header=h)
    ext.header["BSCALE"] = 1e-6; ext.header["BZERO"] = 0.25; ext.header["BLANK"] = -2147483647
    fits.HDUList([fits.PrimaryHDU(), ext]).writeto(os.path.join(HERE, "scaled_int32_extension.fits"), overwrite=True)
    image_expected("scaled_int32_extension.fits", 1, hdu_name=None)

    n = 150
    stored = np.clip(np.round(flux_shape(n) * 100), 0, 255).astype(np.uint8)
    h = fits.Header()
    h["CTYPE1"] = "WAVE"; h["CUNIT1"] = "Angstrom"; h["CRVAL1"] = 3600.0; h["CDELT1"] = 36.0; h["CRPIX1"] = 1.0
    hdu = fits.PrimaryHDU(stored, header=h)
    hdu.header["BSCALE"] = 0.01; hdu.header["BZERO"] = 0.0
    hdu.writeto(os.path.join(HERE, "scaled_uint8.fits"), overwrite=True)
    image_expected("scaled_uint8.fits")

    # 7. gzip: a log-linear air spectrum in Angstrom written gzipped.
    n = 250
    h = fits.Header()
    h["CTYPE1"] = "AWAV-LOG"; h["CUNIT1"] = "Angstrom"; h["CRVAL1"] = 3800.0; h["CDELT1"] = 3800.0 * 0.0035; h["CRPIX1"] = 1.0
    fits.PrimaryHDU(flux_shape(n).astype(np.float32), header=h).writeto(os.path.join(HERE, "air_log_gzip.fits.gz"), overwrite=True)
    with fits.open(os.path.join(HERE, "air_log_gzip.fits.gz")) as hl:
        row = np.asarray(hl[0].data, dtype=float)
        air = WCS(hl[0].header).wcs_pix2world(np.arange(n), 0)[0] * 1e10  # WCSLIB: air wavelength of each pixel
    save("air_log_gzip.fits.gz", air_to_vac_wcslib(air), row)

    # 8. Binary table, one row per sample: vacuum WAVE in Angstrom, FLUX, IVAR (with zeros) and MASK (with set bits).
    n = 250
    wave = np.linspace(3400.0, 9200.0, n)
    flux = 50 * flux_shape(n)
    ivar = np.full(n, 4.0e-2); ivar[[5, 6, 200]] = 0.0
    mask = np.zeros(n, dtype=np.int32); mask[[10, 11, 12, 240]] = [1, 4, 1024, 2]
    cols = [fits.Column(name="WAVE", format="D", unit="Angstrom", array=wave),
            fits.Column(name="FLUX", format="E", unit="10**(-17) erg/s/cm**2/Angstrom", array=flux.astype(np.float32)),
            fits.Column(name="IVAR", format="E", unit="10**(34) erg-2 s2 cm4 Angstrom2", array=ivar.astype(np.float32)),
            fits.Column(name="MASK", format="J", array=mask)]
    t = fits.BinTableHDU.from_columns(cols, name="SPECTRUM")
    t.header["TCTYP1"] = "WAVE"
    t.header["SPEC_RP"] = 1800.0
    fits.HDUList([fits.PrimaryHDU(), t]).writeto(os.path.join(HERE, "table_ivar_mask.fits"), overwrite=True)
    with fits.open(os.path.join(HERE, "table_ivar_mask.fits")) as hl:
        d = hl[1].data
        w = np.asarray(d["WAVE"], dtype=float) * u.Unit(hl[1].header["TUNIT1"], format="fits").to(u.AA)
        f = to_flam(d["FLUX"], hl[1].header["TUNIT2"], w)
        iv = np.asarray(d["IVAR"], dtype=float)
        keep = (iv > 0) & (np.asarray(d["MASK"]) == 0) & np.isfinite(f)
        e = to_flam(1 / np.sqrt(iv[keep]), hl[1].header["TUNIT2"], w[keep])
        save("table_ivar_mask.fits", w[keep], f[keep], e, 1800.0)

    # 9. Binary table, one row of vector columns: LOGLAM (log10 Angstrom), FLUX, ERR; gzipped.
    n = 300
    loglam = np.log10(3600.0) + 1e-3 * np.arange(n)
    flux = 10 * flux_shape(n)
    err = np.full(n, 0.3)
    cols = [fits.Column(name="LOGLAM", format=f"{n}D", array=loglam[None, :]),
            fits.Column(name="FLUX", format=f"{n}E", unit="erg/s/cm2/Angstrom", array=flux[None, :].astype(np.float32)),
            fits.Column(name="ERR", format=f"{n}E", unit="erg/s/cm2/Angstrom", array=err[None, :].astype(np.float32))]
    fits.HDUList([fits.PrimaryHDU(), fits.BinTableHDU.from_columns(cols, name="COADD")]).writeto(
        os.path.join(HERE, "table_vector_loglam.fits.gz"), overwrite=True)
    with fits.open(os.path.join(HERE, "table_vector_loglam.fits.gz")) as hl:
        d = hl[1].data
        w = 10 ** np.asarray(d["LOGLAM"][0], dtype=float)
        save("table_vector_loglam.fits.gz", w, np.asarray(d["FLUX"][0], dtype=float), np.asarray(d["ERR"][0], dtype=float))

    # 10. Two tables; the manifest names the second (EXTNAME 'B'): air wavelengths in nm (column AWAV), F_nu in mJy.
    n = 200
    cols_a = [fits.Column(name="WAVE", format="D", unit="nm", array=np.linspace(350, 900, 50)),
              fits.Column(name="FLUX", format="D", array=np.ones(50))]
    air_nm = np.linspace(360.0, 880.0, n)
    fnu = 0.8 * flux_shape(n)
    cols_b = [fits.Column(name="AWAV", format="D", unit="nm", array=air_nm),
              fits.Column(name="FLUX", format="D", unit="mJy", array=fnu)]
    ta = fits.BinTableHDU.from_columns(cols_a, name="A"); ta.header["TCTYP1"] = "WAVE"
    tb = fits.BinTableHDU.from_columns(cols_b, name="B")
    fits.HDUList([fits.PrimaryHDU(), ta, tb]).writeto(os.path.join(HERE, "two_tables_air_mjy.fits"), overwrite=True)
    with fits.open(os.path.join(HERE, "two_tables_air_mjy.fits")) as hl:
        d = hl["B"].data
        air_aa = np.asarray(d["AWAV"], dtype=float) * u.Unit(hl["B"].header["TUNIT1"], format="fits").to(u.AA)
        vac = air_to_vac_wcslib(air_aa)
        save("two_tables_air_mjy.fits", vac, to_flam(d["FLUX"], hl["B"].header["TUNIT2"], vac), None, None, "B")


# ---- malformed files, assembled card by card -------------------------------------------------------

def card(key, value=None):
    if value is None:
        return key.ljust(80)
    if isinstance(value, bool):
        v = ("T" if value else "F").rjust(20)
    elif isinstance(value, str):
        v = ("'" + value.ljust(8) + "'").ljust(20)
    elif isinstance(value, int):
        v = str(value).rjust(20)
    else:
        v = repr(float(value)).upper().rjust(20)
    return (key.ljust(8) + "= " + v).ljust(80)


def header_bytes(cards, end=True):
    text = "".join(cards) + (card("END") if end else "")
    pad = (-len(text)) % 2880
    return (text + " " * pad).encode("ascii")


def data_bytes(arr):
    raw = arr.tobytes()
    return raw + b"\0" * ((-len(raw)) % 2880)


def image_cards(n=300, **over):
    base = [("SIMPLE", True), ("BITPIX", -32), ("NAXIS", 1), ("NAXIS1", n), ("CTYPE1", "WAVE"), ("CUNIT1", "Angstrom"),
            ("CRVAL1", 3600.0), ("CDELT1", 15.0), ("CRPIX1", 1.0)]
    out = []
    for k, v in base:
        if k in over:
            if over[k] is not None:
                out.append((k, over.pop(k)))
            else:
                over.pop(k)
        else:
            out.append((k, v))
    out.extend(over.items())
    return [card(k, v) for k, v in out]


def image_file(n=300, **over):
    return header_bytes(image_cards(n, **over)) + data_bytes(np.ones(n, dtype=">f4"))


def table_file(wave, flux, extra=None, naxis1=None, naxis=2, drop=()):
    n = len(wave)
    rec = np.zeros(n, dtype=[("w", ">f8"), ("f", ">f4")]); rec["w"] = wave; rec["f"] = flux
    cards = [("XTENSION", "BINTABLE"), ("BITPIX", 8), ("NAXIS", naxis), ("NAXIS1", naxis1 or 12), ("NAXIS2", n)]
    if naxis == 3:
        cards.append(("NAXIS3", 1))
    cards += [("PCOUNT", 0), ("GCOUNT", 1), ("TFIELDS", 2), ("TTYPE1", "WAVE"), ("TFORM1", "D"), ("TUNIT1", "Angstrom"),
              ("TCTYP1", "WAVE"), ("TTYPE2", "FLUX"), ("TFORM2", "E")]
    extra = dict(extra or {})
    cards = [(k, extra.pop(k)) if k in extra else (k, v) for k, v in cards] + list(extra.items())
    cards = [c for c in cards if c[0] not in drop]
    primary = header_bytes([card("SIMPLE", True), card("BITPIX", 8), card("NAXIS", 0), card("EXTEND", True)])
    return primary + header_bytes([card(k, v) for k, v in cards]) + data_bytes(rec)


def write_malformed():
    good_wave = np.linspace(3500.0, 9000.0, 300)
    zigzag = good_wave.copy(); zigzag[150], zigzag[151] = zigzag[151], zigzag[150]
    full = image_file()
    cases = {
        "truncated_header.fits": (full[:1000], "END"),
        "no_end_card.fits": (header_bytes(image_cards(), end=False) + data_bytes(np.ones(300, dtype=">f4")), "END"),
        "truncated_data.fits": (full[:2880 + 600], "NAXIS1"),
        "naxis_zero_only.fits": (header_bytes([card("SIMPLE", True), card("BITPIX", -32), card("NAXIS", 0)]), "NAXIS"),
        "naxis2_missing.fits": (header_bytes(image_cards(NAXIS=2)) + data_bytes(np.ones(300, dtype=">f4")), "NAXIS2"),
        "naxis1_missing.fits": (header_bytes(image_cards(NAXIS1=None)), "NAXIS1"),
        "table_naxis_3.fits": (table_file(good_wave, np.ones(300), naxis=3), "NAXIS"),
        "table_naxis1_wrong.fits": (table_file(good_wave, np.ones(300), naxis1=16), "NAXIS1"),
        "bitpix_missing.fits": (image_file(BITPIX=None), "BITPIX"),
        "bitpix_24.fits": (image_file(BITPIX=24), "BITPIX"),
        "simple_false.fits": (image_file(SIMPLE=False), "SIMPLE"),
        "ctype1_missing.fits": (image_file(CTYPE1=None), "CTYPE1"),
        "ctype1_frequency.fits": (image_file(CTYPE1="FREQ"), "CTYPE1"),
        "crval1_missing.fits": (image_file(CRVAL1=None), "CRVAL1"),
        "cdelt1_missing.fits": (image_file(CDELT1=None), "CDELT1"),
        "cdelt1_zero.fits": (image_file(CDELT1=0.0), "CDELT1"),
        "cunit1_hertz.fits": (image_file(CUNIT1="Hz"), "CUNIT1"),
        "cunit1_missing_metres.fits": (image_file(CUNIT1=None), "CUNIT1"),
        "log_crval1_negative.fits": (image_file(CTYPE1="WAVE-LOG", CRVAL1=-3600.0), "CRVAL1"),
        "linear_reaches_negative.fits": (image_file(CDELT1=-15.0), "CRVAL1"),
        "bunit_counts.fits": (image_file(BUNIT="count"), "BUNIT"),
        "dc_flag_log10.fits": (image_file(**{"DC-FLAG": 1}), "DC-FLAG"),
        "spec_rp_negative.fits": (image_file(SPEC_RP=-5.0), "SPEC_RP"),
        "air_below_2000.fits": (image_file(CTYPE1="AWAV", CRVAL1=1200.0), "CTYPE1"),
        "blank_on_float.fits": (image_file(BLANK=-1), "BLANK"),
        "table_not_monotonic.fits": (table_file(zigzag, np.ones(300)), "WAVE"),
        "table_no_flux_column.fits": (table_file(good_wave, np.ones(300), extra={"TTYPE2": "COUNTS"}), "TTYPEn"),
        "table_tform2_missing.fits": (table_file(good_wave, np.ones(300), drop=("TFORM2",)), "TFORM2"),
        "table_tunit1_missing.fits": (table_file(good_wave, np.ones(300), drop=("TUNIT1",)), "TUNIT1"),
    }
    expected = {}
    for name, (blob, keyword) in cases.items():
        with open(os.path.join(HERE, "malformed", name), "wb") as f:
            f.write(blob)
        expected[name] = keyword
    with open(os.path.join(HERE, "malformed", "malformed.json"), "w") as f:
        json.dump(expected, f, indent=1, sort_keys=True)


if __name__ == "__main__":
    os.makedirs(os.path.join(HERE, "malformed"), exist_ok=True)
    write_valid()
    write_malformed()
