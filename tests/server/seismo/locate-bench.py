#!/usr/bin/python3
"""Speed reference for `npm run bench:locate`: a plain numpy grid search on the same picks.

Reads JSON on stdin: {"stations": [...], "picks": [...], "model": {...}, "maxDepthKm", "halfWidthKm",
"centre": {...}, "runs", "traces": {"count", "n", "fs"}}. Does what server/seismo/locate.ts's grid search
does, vectorised: first-arrival tables at 1 km in distance for 33 depth nodes (direct wave by dense ray
shooting in p, head waves by their closed form), a 31 x 31 x 9 coarse grid and a 21 x 21 x 9 fine grid
around its best node (weighted L2 misfit, origin time eliminated), on the sphere R = 6371 km. Then,
for the magnitude part, the Wood-Anderson simulation of `count` traces of n samples by numpy's FFT.
Prints JSON: median wall and CPU times (ms) and the grid's best node. Uses numpy only.
"""
import json
import math
import sys
import time

import numpy as np

R = 6371.0


def first_arrival_table(tops, v, z, step, count):
    """First-arrival times at distances 0, step, ... for a source at depth z (km, km/s, s)."""
    x = np.arange(count) * step
    n = len(tops)
    bottoms = list(tops[1:]) + [math.inf]
    h = np.array([max(0.0, min(z, b) - t) for t, b in zip(tops, bottoms)])
    crossed = h > 0
    if z == 0:
        direct = x / v[0]
    else:
        vmax = v[crossed].max()
        # Dense shooting: q = p*vmax on a grid crowded towards 1 (where X grows without bound).
        u = np.linspace(0.0, 1.0, 4001)[:-1]
        q = 1.0 - (1.0 - u) ** 4
        a = v[crossed] / vmax
        hh = h[crossed]
        c = np.sqrt(1.0 - np.outer(q, a) ** 2)
        X = (hh * np.outer(q, a) / c).sum(axis=1)
        T = q / vmax * X + (hh * c / v[crossed]).sum(axis=1)
        direct = np.interp(x, X, T)
    best = direct
    for m in range(1, n):
        if tops[m] < z or v[m] <= v[:m].max():
            continue
        p = 1.0 / v[m]
        legs = np.array([(bottoms[i] - tops[i]) + max(0.0, bottoms[i] - max(z, tops[i])) for i in range(m)])
        eta = np.sqrt(1.0 / v[:m] ** 2 - p * p)
        t = x * p + (legs * eta).sum()
        xc = (legs * p * v[:m] / np.sqrt(1 - (p * v[:m]) ** 2)).sum()
        best = np.where(x >= xc, np.minimum(best, t), best)
    return best


def unit(lat, lon):
    f, l = np.radians(lat), np.radians(lon)
    return np.stack([np.cos(f) * np.cos(l), np.cos(f) * np.sin(l), np.sin(f)], axis=-1)


def local_to_geo(c_lat, c_lon, east, north):
    d = np.hypot(east, north) / R
    az = np.arctan2(east, north)
    f1 = math.radians(c_lat)
    f2 = np.arcsin(np.sin(f1) * np.cos(d) + np.cos(f1) * np.sin(d) * np.cos(az))
    l2 = math.radians(c_lon) + np.arctan2(np.sin(az) * np.sin(d) * math.cos(f1), np.cos(d) - math.sin(f1) * np.sin(f2))
    return np.degrees(f2), np.degrees(l2)


def grid_search(cfg):
    st = {s["code"]: s for s in cfg["stations"]}
    picks = cfg["picks"]
    t_ref = min(p["timeS"] for p in picks)
    t = np.array([p["timeS"] - t_ref for p in picks])
    w = np.array([1.0 / p["uncertaintyS"] ** 2 for p in picks])
    wave = np.array([0 if p["phase"] == "P" else 1 for p in picks])
    su = unit(np.array([st[p["stationCode"]]["latitudeDeg"] for p in picks]), np.array([st[p["stationCode"]]["longitudeDeg"] for p in picks]))
    layers = cfg["model"]["layers"]
    tops = np.array([l["topKm"] for l in layers])
    speeds = [np.array([l["vpKmS"] for l in layers]), np.array([l["vsKmS"] for l in layers])]
    maxz = cfg["maxDepthKm"]
    half = cfg["halfWidthKm"]
    depth_nodes = maxz * np.arange(33) / 32
    cu = unit(np.array([cfg["centre"]["latitudeDeg"]]), np.array([cfg["centre"]["longitudeDeg"]]))[0]
    max_st = (2 * R * np.arcsin(np.minimum(1, np.linalg.norm(su - cu, axis=1) / 2))).max()
    count = int(math.ceil(max_st + half * math.sqrt(2) + 2)) + 2
    tables = {}

    def table(j, k):
        if (j, k) not in tables:
            tables[(j, k)] = first_arrival_table(tops, speeds[k], depth_nodes[j], 1.0, count)
        return tables[(j, k)]

    c_lat, c_lon = cfg["centre"]["latitudeDeg"], cfg["centre"]["longitudeDeg"]
    depths = list(range(0, 33, 4))
    nodes = 31
    best = None
    for level in range(2):
        spacing = 2 * half / (nodes - 1)
        e, nn = np.meshgrid(-half + spacing * np.arange(nodes), -half + spacing * np.arange(nodes))
        lat, lon = local_to_geo(c_lat, c_lon, e.ravel(), nn.ravel())
        nu = unit(lat, lon)
        dist = 2 * R * np.arcsin(np.minimum(1, np.linalg.norm(nu[:, None, :] - su[None, :, :], axis=2) / 2))
        level_best = None
        for j in depths:
            tt = np.empty_like(dist)
            for k in (0, 1):
                sel = wave == k
                if sel.any():
                    tt[:, sel] = np.interp(dist[:, sel], np.arange(count) * 1.0, table(j, k))
            r = t[None, :] - tt
            sw = w.sum()
            swr = (w * r).sum(axis=1)
            misfit = (w * r * r).sum(axis=1) - swr * swr / sw
            i = int(np.argmin(misfit))
            if level_best is None or misfit[i] < level_best[0]:
                level_best = (float(misfit[i]), float(lat[i]), float(lon[i]), j, float(swr[i] / sw))
        best = level_best
        c_lat, c_lon = best[1], best[2]
        half = 2 * spacing
        nodes = 21
        depths = list(range(max(0, best[3] - 4), min(32, best[3] + 4) + 1))
    return {"latitudeDeg": best[1], "longitudeDeg": best[2], "depthKm": float(depth_nodes[best[3]]), "timeS": t_ref + best[4]}


def wood_anderson(traces, fs):
    w0 = 2 * math.pi / 0.8
    out = []
    for x in traces:
        n = len(x)
        size = 4
        while size < n + math.ceil(5 * fs):
            size *= 2
        spec = np.fft.rfft(x - x.mean(), size)
        s = 2j * math.pi * np.fft.rfftfreq(size, 1 / fs)
        h = 2080.0 * s / (s * s + 2 * 0.7 * w0 * s + w0 * w0)
        y = np.fft.irfft(spec * h, size)[:n] * 1000.0
        out.append(np.abs(y).max())
    return out


def main():
    cfg = json.load(sys.stdin)
    runs = cfg["runs"]
    times = []
    cpu = []
    result = None
    for _ in range(runs):
        t0 = time.perf_counter()
        c0 = time.process_time()
        result = grid_search(cfg)
        cpu.append((time.process_time() - c0) * 1000)
        times.append((time.perf_counter() - t0) * 1000)
    tr = cfg["traces"]
    rng = np.random.default_rng(7)
    traces = [rng.standard_normal(tr["n"]) * 1e-6 for _ in range(tr["count"])]
    wa_times = []
    for _ in range(max(3, runs // 3)):
        t0 = time.perf_counter()
        wood_anderson(traces, tr["fs"])
        wa_times.append((time.perf_counter() - t0) * 1000)
    print(json.dumps({"gridMedianMs": float(np.median(times)), "gridCpuMedianMs": float(np.median(cpu)), "gridBest": result, "woodAndersonMedianMs": float(np.median(wa_times)), "numpy": np.__version__}))


main()
