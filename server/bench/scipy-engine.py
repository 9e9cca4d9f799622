#!/usr/bin/python3
"""The engine's steps done with numpy/scipy in one process, timed by itself (for npm run bench:engine).

Written as a practitioner would script it: the Butterworth sections are designed ONCE, before any
timed run (as anyone analysing a stream of windows would), everything per window is vectorised numpy
or a scipy.signal / scipy.ndimage call, and the few Python loops run over triggers, not samples.

Per window and channel, the same steps as analyzeWindow (server/dsp/pipeline.ts) on the same input:
  QC: max |x|, mean, standard deviation, equal consecutive samples, flat tops at ±max|x|, flat
      segments (≥ 0.5 s of identical samples), a DC step between 1 s block medians, spikes by the
      5-sample running median residual and its MAD (every stride-th of at most ~4096 residuals),
      standing alone against the residuals 2 … max(10, fs/4) samples away;
  linear detrend (once; both traces below start from it) × tukey(n, alpha) → the pre-processed trace;
  causal sosfilt low and high band-passes of it, band energies, their ratio;
  the trigger trace: the detrended trace with a cosine ramp over the first startS seconds (no taper),
      causal sosfilt high band-pass (the second high-band pass);
  delayed-LTA STA/LTA (the LTA ends where the STA begins, expanding mean from startS, ratio once the
      LTA holds minLtaS) with numpy cumsum; on/off triggers with hysteresis;
  per trigger: its peak, and the AIC onset (Maeda 1985) over [on − onsetSearchS, on + onsetAfterS)
      with numpy prefix sums; the main (strongest) trigger;
  amplitude SNR around the main onset (signalS and onsetWindowS after it);
  Welch PSD of the pre-processed trace (hann, nperseg, 50 %, constant detrend, density), dominant
      frequency and centroid above fminStats;
  with a main trigger: the signal and noise parts (same plan as planSignalSegments), Welch of each,
      their ratio, the excess peak and centroid, in-band power ratio and share over the high band;
then the window's score (deciding channel, robust z against the network default baseline).

stdin: raw little-endian float64 samples, channel after channel. argv: channels, samples per channel,
fs, a JSON object of parameters (the engine's profile, with the bands the engine used).
Then reads lines from stdin: "run K" times K runs and prints one JSON line {"times": [...ms]};
"result" prints the per-channel results of one run (for the benchmark's agreement check); "quit" ends.
"""
import json
import math
import sys
import time

import numpy as np
from scipy import ndimage, signal


def dc_step(x, block):
    """1 s block medians; a boundary where the 3 blocks either side differ by > 10 robust σ of the
    block-to-block changes, each side steady within a third of the step. First such boundary or None."""
    nb = len(x) // block
    if nb < 6:
        return None
    med = np.median(x[:nb * block].reshape(nb, block), axis=1)
    d = np.diff(med)
    sigma = 1.4826 * np.median(np.abs(d - np.median(d)))
    if not sigma > 0:
        return None
    w = np.lib.stride_tricks.sliding_window_view(med, 3)  # w[j] = med[j:j+3]
    left, right = np.median(w[:nb - 5], axis=1), np.median(w[3:nb - 2], axis=1)  # boundaries b = 3 … nb−3
    size = right - left
    tol = np.abs(size) / 3
    steady = (np.abs(w[:nb - 5] - left[:, None]).max(axis=1) <= tol) & (np.abs(w[3:nb - 2] - right[:, None]).max(axis=1) <= tol)
    hit = np.flatnonzero((np.abs(size) > 10 * sigma) & steady)
    return None if hit.size == 0 else int((hit[0] + 3) * block)


def qc(x, fs, spike_k):
    n = len(x)
    ax = np.abs(x)
    max_abs = ax.max()
    mean = x.mean()
    std = x.std()
    same = np.diff(x) == 0
    if std == 0 or np.count_nonzero(same) / (n - 1) >= 0.99:
        return {"flatLine": True}
    # Runs of equal samples: flat tops at ±max|x| (≥ 3) and flat segments (≥ 0.5 s).
    edges = np.flatnonzero(np.diff(np.concatenate(([0], same.view(np.int8), [0]))))
    starts, lengths = edges[::2], edges[1::2] - edges[::2] + 1
    tops = np.count_nonzero((lengths >= 3) & (ax[starts] == max_abs))
    flats = np.count_nonzero(lengths >= max(2, round(0.5 * fs)))
    step = dc_step(x, max(1, round(fs)))
    # Spikes: residual from the 5-sample running median, standing alone over 2 … reach samples.
    reach = max(10, round(0.25 * fs))
    r = np.zeros(n)
    r[2:n - 2] = (x - ndimage.median_filter(x, size=5, mode="nearest"))[2:n - 2]
    inner = r[2:n - 2]
    sample = inner[::max(1, math.ceil(len(inner) / 4096))]
    sigma = 1.4826 * np.median(np.abs(sample - np.median(sample)))
    if not sigma > 0:
        sigma = 1.2533 * np.mean(np.abs(sample))
    spikes = 0
    if sigma > 0:
        ar = np.abs(r)
        for i in np.flatnonzero(ar[2:n - 2] > spike_k * sigma) + 2:
            lo, hi = max(2, i - reach), min(n - 3, i + reach)
            around = np.concatenate((ar[lo:max(lo, i - 1)], ar[i + 2:hi + 1]))
            if ar[i] > 4 * (around.max() if around.size else 0.0):
                spikes += 1
    return {"flatTops": int(tops), "flatSegments": int(flats), "dcStep": step, "spikes": spikes, "dcOffset": bool(abs(mean) > 5 * std)}


def delayed_sta_lta(y, nsta, nlta, a, min_lta):
    """ratio_i = mean(s[max(a, i−nsta+1) … i]) / mean(s[max(a, i−nsta−nlta+1) … i−nsta]), s = y²."""
    n = len(y)
    m = n - a
    pad = nsta + nlta
    c = np.zeros(pad + m + 1)  # c[pad + j] = Σ s over the first j samples from a; 0 before a
    np.cumsum(y[a:] ** 2, out=c[pad + 1:])
    sta_sum = c[pad + 1:] - c[pad + 1 - nsta:pad + 1 - nsta + m]
    lta_sum = c[pad + 1 - nsta:pad + 1 - nsta + m] - c[pad + 1 - nsta - nlta:pad + 1 - nsta - nlta + m]
    k = np.arange(1, m + 1)
    sta_count = np.minimum(k, nsta)
    lta_count = np.clip(k - nsta, 0, nlta)
    ok = (lta_count >= min_lta) & (lta_sum > 0)
    out = np.zeros(n)
    with np.errstate(divide="ignore", invalid="ignore"):
        out[a:] = np.where(ok, (sta_sum / sta_count) / (lta_sum / lta_count), 0.0)
    return out


def triggers(r, on, off):
    above = np.flatnonzero(r > on)
    out, i = [], 0
    while i < len(above):
        start = above[i]
        below = np.flatnonzero(r[start:] < off)
        if len(below) == 0:
            out.append((int(start), None))
            break
        end = start + below[0]
        out.append((int(start), int(end)))
        i = np.searchsorted(above, end)
    return out


def aic_onset(x, f, t, min_part=10):
    """AIC(k) = k·ln var(x[f:f+k]) + (N−k)·ln var(x[f+k:t]); the split at the minimum (Maeda 1985)."""
    v = x[f:t] - x[f:t].mean()
    m = len(v)
    if m < 2 * min_part:
        return None
    s1 = np.concatenate(([0.0], np.cumsum(v)))
    s2 = np.concatenate(([0.0], np.cumsum(v * v)))
    total = s2[m] / m - (s1[m] / m) ** 2
    if not total > 0:
        return None
    k = np.arange(min_part, m - min_part + 1)
    var1 = s2[k] / k - (s1[k] / k) ** 2
    var2 = (s2[m] - s2[k]) / (m - k) - ((s1[m] - s1[k]) / (m - k)) ** 2
    tiny = total * 1e-12
    aic = k * np.log(np.maximum(var1, tiny)) + (m - k) * np.log(np.maximum(var2, tiny))
    return f + int(k[np.argmin(aic)])


def plan_parts(n, fs, on, off, p, guard, taper, max_nperseg):
    ss = p["signalSpectrum"]
    min_len, max_len = round(ss["minS"] * fs), round(ss["maxS"] * fs)
    dur = max_len if off is None else min(max_len, max(min_len, off - on))
    sig_to = min(n, on + dur)
    if sig_to - on < min_len:
        return None
    noise_to = on - guard
    noise_from = max(taper, noise_to - round(ss["noiseMaxS"] * fs))
    if noise_to - noise_from < round(ss["noiseMinS"] * fs):
        return None
    m = min(max_nperseg, math.floor(ss["segmentS"] * fs), sig_to - on, noise_to - noise_from)
    nperseg = 1 << (int(m).bit_length() - 1)
    return None if nperseg < 16 else (on, sig_to, noise_from, noise_to, nperseg)


def welch(x, fs, nperseg):
    return signal.welch(x, fs, window="hann", nperseg=nperseg, noverlap=nperseg // 2, detrend="constant", scaling="density")


def analyse_channel(x, fs, p, sos_lo, sos_hi, tukey):
    n = len(x)
    sl = p["staLta"]
    q = qc(x, fs, p["qc"]["spikeK"])
    d = signal.detrend(x, type="linear")
    pre = d * tukey
    lo = signal.sosfilt(sos_lo, pre)
    hi = signal.sosfilt(sos_hi, pre)
    e_lo, e_hi = np.dot(lo, lo) / fs, np.dot(hi, hi) / fs
    # Trigger trace: no taper, a cosine ramp over the first startS seconds, its own high-band pass.
    a = min(n, round(sl["startS"] * fs))
    trig = d.copy()
    trig[:a] *= 0.5 * (1 - np.cos(np.pi * np.arange(a) / a))
    ty = signal.sosfilt(sos_hi, trig)
    r = delayed_sta_lta(ty, round(sl["staS"] * fs), round(sl["ltaS"] * fs), a, max(1, round(sl["minLtaS"] * fs)))
    trigs = triggers(r, sl["on"], sl["off"])
    onsets, peaks = [], []
    for on, off in trigs:
        k = aic_onset(ty, max(a, on - round(sl["onsetSearchS"] * fs)), min(n, on + round(sl["onsetAfterS"] * fs)))
        onsets.append(on if k is None else min(k, on))
        peaks.append(float(r[on:n if off is None else off].max()))
    main = int(np.argmax(peaks)) if peaks else None
    snr = onset_snr = None
    if main is not None and onsets[main] > 0:
        o = onsets[main]
        noise = ty[max(0, o - max(1, round(min(p["snr"]["noiseS"], (o - a) / fs) * fs))):o]
        if noise.size and np.any(noise):
            noise_ms = np.mean(noise ** 2)
            snr = float(np.sqrt(np.mean(ty[o:min(n, o + max(1, round(p["snr"]["signalS"] * fs)))] ** 2) / noise_ms))
            onset_snr = float(np.sqrt(np.mean(ty[o:min(n, o + max(1, round(sl["onsetWindowS"] * fs)))] ** 2) / noise_ms))
    f, pxx = welch(pre, fs, min(p["psd"]["nperseg"], n))
    m = f >= p["psd"]["fminStats"]
    dom = float(f[m][np.argmax(pxx[m])])
    cen = float(np.sum(f[m] * pxx[m]) / np.sum(pxx[m]))
    spec = None
    if main is not None:
        plan = plan_parts(n, fs, onsets[main], trigs[main][1], p, round(p["signalSpectrum"]["guardS"] * fs), a, p["psd"]["nperseg"])
        if plan is not None:
            s0, s1, n0, n1, seg = plan
            fr, ps = welch(trig[s0:s1], fs, seg)
            _, pn = welch(trig[n0:n1], fs, seg)
            with np.errstate(divide="ignore", invalid="ignore"):
                ratio = np.where(pn > 0, ps / pn, np.nan)
            counted = (pn > 0) & (fr >= p["psd"]["fminStats"]) & (fr <= 0.45 * fs) & (ratio >= p["signalSpectrum"]["minSnr"])
            excess = ps - pn
            band = (fr >= p["bands"]["high"]["fmin"]) & (fr <= p["bands"]["high"]["fmax"])
            spec = {
                "peakFrequency": float(fr[counted][np.argmax(excess[counted])]) if counted.any() else None,
                "centroid": float(np.sum(fr[counted] * excess[counted]) / np.sum(excess[counted])) if counted.any() else None,
                "inBandSnr": float(ps[band].sum() / pn[band].sum()) if band.any() and pn[band].sum() > 0 else None,
                "inBandShare": float(np.mean(ratio[band] >= p["signalSpectrum"]["minSnr"])) if band.any() else None,
            }
    return {
        "qc": q,
        "ratio": float(e_hi / e_lo) if e_lo > 0 else None,
        "peak": float(r.max()),
        "onsets": [o / fs for o in onsets],
        "triggerPeaks": peaks,
        "main": main,
        "snr": snr,
        "onsetSnr": onset_snr,
        "dominantFrequency": dom,
        "spectralCentroid": cen,
        "signalSpectrum": spec,
    }


def analyse(chans, fs, p, sos_lo, sos_hi, tukey):
    out = [analyse_channel(x, fs, p, sos_lo, sos_hi, tukey) for x in chans]
    # Score: the deciding channel (highest STA/LTA peak, vertical = first on a tie), robust z of its
    # peak and log10 ratio against the network default, the in-band test.
    th, base = p["thresholds"], p["baseline"]
    lead = max(range(len(out)), key=lambda i: (out[i]["peak"], -i))
    c = out[lead]
    zp = (c["peak"] - base["staLtaPeak"]["median"]) / (1.4826 * max(base["staLtaPeak"]["mad"], 0.1))
    zr = 0.0 if not c["ratio"] else (math.log10(c["ratio"]) - base["log10Ratio"]["median"]) / (1.4826 * max(base["log10Ratio"]["mad"], 0.05))
    s = c["signalSpectrum"]
    in_band = s is not None and s["inBandSnr"] is not None and s["inBandSnr"] >= th["minInBandSnr"] and s["inBandShare"] >= th["minInBandShare"]
    score = 0.5 * min(50, max(-10, zp)) + 0.5 * min(50, max(-10, zr))
    if not in_band and score > 0:
        score /= 2
    return {"channels": out, "score": round(score * 10) / 10, "lead": lead}


def main():
    nch, n, fs, p = int(sys.argv[1]), int(sys.argv[2]), float(sys.argv[3]), json.loads(sys.argv[4])
    data = np.frombuffer(sys.stdin.buffer.read(nch * n * 8), dtype="<f8")
    if data.size != nch * n:
        raise SystemExit(f"expected {nch * n} samples on stdin, got {data.size}")
    chans = [data[i * n:(i + 1) * n].copy() for i in range(nch)]
    # Designed once, outside the timed runs.
    b = p["bands"]
    sos_lo = signal.butter(b["order"], [b["low"]["fmin"], b["low"]["fmax"]], "bandpass", fs=fs, output="sos")
    sos_hi = signal.butter(b["order"], [b["high"]["fmin"], b["high"]["fmax"]], "bandpass", fs=fs, output="sos")
    tukey = signal.windows.tukey(n, p["preprocess"]["taperAlpha"])
    for _ in range(2):
        analyse(chans, fs, p, sos_lo, sos_hi, tukey)
    print("ready", flush=True)
    for line in sys.stdin:
        cmd = line.split()
        if not cmd or cmd[0] == "quit":
            break
        if cmd[0] == "result":
            print(json.dumps(analyse(chans, fs, p, sos_lo, sos_hi, tukey)), flush=True)
            continue
        times = []
        for _ in range(int(cmd[1])):
            t0 = time.perf_counter()
            analyse(chans, fs, p, sos_lo, sos_hi, tukey)
            times.append((time.perf_counter() - t0) * 1000)
        print(json.dumps({"times": times}), flush=True)


main()
