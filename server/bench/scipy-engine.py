#!/usr/bin/python3
"""The engine's steps done by scipy in one process, timed by itself (for npm run bench:engine).

stdin: raw little-endian float64 samples, channel after channel; argv: channels, samples per
channel, fs, runs. Per run and channel: linear detrend x tukey(n, 0.10); butter(4, [0.5, 2]) and
butter(4, [2, 10]) band-pass designs (sos) and sosfilt; band energies; welch(hann, 1024, 50 %,
constant detrend, density); dominant frequency / centroid above 0.1 Hz; classic 1 s / 30 s STA/LTA
with numpy cumsum and on/off triggers at 3.5 / 1.5. Prints one JSON object: median and min in ms.
"""
import json
import sys
import time

import numpy as np
from scipy import signal


def sta_lta(y, nsta, nlta):
    c = np.concatenate([[0.0], np.cumsum(y * y)])
    r = np.zeros(len(y))
    i = np.arange(nlta - 1, len(y))
    lta = (c[i + 1] - c[i + 1 - nlta]) / nlta
    sta = (c[i + 1] - c[i + 1 - nsta]) / nsta
    with np.errstate(divide="ignore", invalid="ignore"):
        r[i] = np.where(lta > 0, sta / lta, 0.0)
    return r


def triggers(r, on, off):
    above = np.flatnonzero(r > on)
    out, i = [], 0
    while i < len(above):
        start = above[i]
        below = np.flatnonzero(r[start:] < off)
        if len(below) == 0:
            out.append((start, None))
            break
        end = start + below[0]
        out.append((start, end))
        i = np.searchsorted(above, end)
    return out


def analyse(chans, fs):
    out = []
    for x in chans:
        n = len(x)
        y = signal.detrend(x, type="linear") * signal.windows.tukey(n, 0.1)
        lo = signal.sosfilt(signal.butter(4, [0.5, 2.0], "bandpass", fs=fs, output="sos"), y)
        hi = signal.sosfilt(signal.butter(4, [2.0, 10.0], "bandpass", fs=fs, output="sos"), y)
        e_lo, e_hi = np.sum(lo * lo) / fs, np.sum(hi * hi) / fs
        f, p = signal.welch(y, fs, window="hann", nperseg=1024, noverlap=512, detrend="constant", scaling="density")
        m = f >= 0.1
        dom = f[m][np.argmax(p[m])]
        cen = np.sum(f[m] * p[m]) / np.sum(p[m])
        r = sta_lta(hi, int(round(fs)), int(round(30 * fs)))
        out.append((e_hi / e_lo, dom, cen, r.max(), triggers(r, 3.5, 1.5)))
    return out


def main():
    nch, n, fs, runs = int(sys.argv[1]), int(sys.argv[2]), float(sys.argv[3]), int(sys.argv[4])
    data = np.frombuffer(sys.stdin.buffer.read(), dtype="<f8")
    if data.size != nch * n:
        raise SystemExit(f"expected {nch * n} samples on stdin, got {data.size}")
    chans = [data[i * n:(i + 1) * n].copy() for i in range(nch)]
    for _ in range(3):
        analyse(chans, fs)
    times = []
    for _ in range(runs):
        t0 = time.perf_counter()
        res = analyse(chans, fs)
        times.append((time.perf_counter() - t0) * 1000)
    print(json.dumps({"medianMs": float(np.median(times)), "minMs": float(np.min(times)), "runs": runs,
                      "ratio0": float(res[0][0])}))


main()
