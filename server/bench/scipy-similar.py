#!/usr/bin/python3
"""The bank search of `npm run bench:similar` done with numpy/scipy in one process, timed by itself.

Same input as the engine (server/bench/similar.ts writes it to a file): one window of C band-passed
components (N samples each) and T templates of C components (M samples each, float32 as stored).
For every template: sum over components of scipy.signal.fftconvolve(x_c, w_c reversed, 'valid') — the
correlation at every lag, full rate — batched 50 templates per call (as a practitioner would vectorise
it), divided by sqrt(template energy x running data energy over M samples), then each template's best
value and lag. The running data energies are computed once (they do not depend on the template).
Single-threaded BLAS (ours is one thread too).

argv: path, C, N, T, M. Then stdin lines: "run K" times K searches and prints {"times": [ms...]};
"result" prints every template's best {"id", "value", "lag"}; "quit".
"""
import json
import sys
import time

import numpy as np
from scipy import signal

path, C, N, T, M = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4]), int(sys.argv[5])
raw = np.fromfile(path, dtype="<f8", count=C * N)
x = raw.reshape(C, N)
w = np.fromfile(path, dtype="<f4", offset=C * N * 8).reshape(T, C, M).astype(np.float64)
w_rev = w[:, :, ::-1].copy()
BATCH = 50


def search():
    sq = (x * x).sum(axis=0)
    cs = np.concatenate(([0.0], np.cumsum(sq)))
    e = cs[M:] - cs[:-M]
    ok = e > e.max() * 1e-12
    inv = np.zeros_like(e)
    inv[ok] = 1.0 / np.sqrt(e[ok])
    ww = (w * w).sum(axis=(1, 2))
    best = np.empty(T)
    lags = np.empty(T, dtype=int)
    for b in range(0, T, BATCH):
        num = signal.fftconvolve(x[None, :, :], w_rev[b:b + BATCH], mode="valid", axes=2).sum(axis=1)
        c = num * inv[None, :] / np.sqrt(ww[b:b + BATCH])[:, None]
        lags[b:b + BATCH] = c.argmax(axis=1)
        best[b:b + BATCH] = c[np.arange(c.shape[0]), lags[b:b + BATCH]]
    return best, lags


print("ready", flush=True)
for line in sys.stdin:
    cmd = line.split()
    if not cmd or cmd[0] == "quit":
        break
    if cmd[0] == "run":
        times = []
        for _ in range(int(cmd[1])):
            t0 = time.perf_counter()
            search()
            times.append((time.perf_counter() - t0) * 1000)
        print(json.dumps({"times": times}), flush=True)
    elif cmd[0] == "result":
        best, lags = search()
        print(json.dumps([{"id": i + 1, "value": float(best[i]), "lag": int(lags[i])} for i in range(T)]), flush=True)
