#!/usr/bin/python3
"""Reference values for PathBench's image metrics, computed with numpy and scikit-image.

Run with Debian's interpreter (/usr/bin/python3, packages python3-numpy and python3-skimage).
Usage: reference_metrics.py DIR
DIR holds manifest.txt, one case per line:
    NAME WIDTH HEIGHT DATA_RANGE EPSILON ROI_X ROI_Y ROI_W ROI_H
and for each case NAME.ref.bin and NAME.test.bin: float32 little-endian RGB, row-major,
top row first. Prints one "NAME KEY VALUE" line per metric (VALUE as %.17g).
"""
import sys
import warnings

import numpy as np
from scipy.ndimage import maximum_filter
from skimage.metrics import peak_signal_noise_ratio, structural_similarity

# ITU-R BT.709-6 item 3.3 luminance weights.
W709 = np.array([0.2126, 0.7152, 0.0722])


def load(path, w, h):
    data = np.fromfile(path, dtype='<f4')
    if data.size != w * h * 3:
        raise SystemExit(f"{path}: expected {w * h * 3} floats, found {data.size}")
    return data.reshape(h, w, 3).astype(np.float64)


def main():
    root = sys.argv[1]
    with open(f"{root}/manifest.txt", encoding="ascii") as manifest:
        lines = [line.split() for line in manifest if line.strip()]
    for name, w, h, data_range, eps, rx, ry, rw, rh in lines:
        w, h, rx, ry, rw, rh = (int(v) for v in (w, h, rx, ry, rw, rh))
        data_range, eps = float(data_range), float(eps)
        ref = load(f"{root}/{name}.ref.bin", w, h)[ry:ry + rh, rx:rx + rw]
        test = load(f"{root}/{name}.test.bin", w, h)[ry:ry + rh, rx:rx + rw]
        finite = np.all(np.isfinite(ref), axis=2) & np.all(np.isfinite(test), axis=2)
        out = {"nonfinite": float(np.count_nonzero(~finite))}
        r, t = ref[finite], test[finite]          # shape (N, 3)
        ry_, ty_ = r @ W709, t @ W709              # luminance, shape (N,)
        d = t - r
        out["mse"] = np.mean(d ** 2)
        out["rmse"] = np.sqrt(out["mse"])
        out["relmse"] = np.mean(d ** 2 / (r ** 2 + eps))
        out["smape"] = np.mean(np.abs(d) / (np.abs(t) + np.abs(r) + eps))
        out["bias"] = np.mean(d)
        for i, c in enumerate("rgb"):
            out["mse_" + c] = np.mean(d[:, i] ** 2)
            out["bias_" + c] = np.mean(d[:, i])
        dy = ty_ - ry_
        out["mse_y"] = np.mean(dy ** 2)
        out["relmse_y"] = np.mean(dy ** 2 / (ry_ ** 2 + eps))
        if not np.all(finite) and rw >= 11 and rh >= 11:
            # Excluded pixels: SSIM map of scikit-image with them zeroed, then the mean over the
            # window centres whose 11x11 window touches no excluded pixel (and, as always, the
            # centres at least 5 pixels from the border).
            bad = ~finite
            lum_ref = np.where(bad, 0.0, np.nan_to_num(ref, nan=0.0, posinf=0.0, neginf=0.0) @ W709)
            lum_test = np.where(bad, 0.0, np.nan_to_num(test, nan=0.0, posinf=0.0, neginf=0.0) @ W709)
            _, smap = structural_similarity(
                lum_ref, lum_test, gaussian_weights=True, sigma=1.5,
                use_sample_covariance=False, data_range=data_range, full=True)
            touched = maximum_filter(bad.astype(np.uint8), size=11, mode="constant", cval=0) > 0
            keep = ~touched[5:-5, 5:-5]
            out["ssim"] = smap[5:-5, 5:-5][keep].mean()
            out["psnr"] = 10 * np.log10(data_range ** 2 / out["mse"])
        if np.all(finite):
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")  # identical images: division by zero gives inf
                out["psnr"] = peak_signal_noise_ratio(ref, test, data_range=data_range)
                lum_ref, lum_test = ref @ W709, test @ W709
                out["psnr_y"] = peak_signal_noise_ratio(lum_ref, lum_test, data_range=data_range)
            if rw >= 11 and rh >= 11:
                out["ssim"] = structural_similarity(
                    lum_ref, lum_test, gaussian_weights=True, sigma=1.5,
                    use_sample_covariance=False, data_range=data_range)
        for key, value in out.items():
            print(f"{name} {key} {float(value):.17g}")


if __name__ == "__main__":
    main()
