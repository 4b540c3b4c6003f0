#!/usr/bin/env python3
"""The default chain of `hetbench bench` written in numpy/scipy, as a careful user would write it: complex64
throughout, one exp (as float32 cos/sin) per block and Horner's rule over the LO harmonics, in-place operations,
scipy.signal.upfirdn for the decimating FIR (polyphase: only the kept outputs) and scipy.signal.welch.

    python3 tests/bench/chain_numpy.py [--samples N] [--runs R] [--block B]

prints one JSON document: {"msps": median over the runs, "runs_msps": [...], "samples": N, ...}.
`--dump FILE` instead runs the chain once on a deterministic input and writes the decimated output (complex64,
raw) for the cross-check in tests/kernels_test.cpp.

The chain (dsp/throughput_chain.hpp): LO with K = 8 harmonics of a +-1 switch (duty 0.505, edge 0.02 of the
period, harmonic k turned by 0.1 k rad), u = x (1 + a3 |x|^2), z = u L, IQ imbalance y = mu z + eta conj(z) + dc,
128-tap Kaiser (80 dB) low-pass decimating by 8, Welch 4096 points, Blackman-Harris, 50 % overlap.
"""
import argparse
import json
import sys
import time

import numpy as np
import scipy
import scipy.signal as ss

NU = 0.0371
K = 8
A3 = -0.02
IQ_GAIN_DB = 0.3
IQ_PHASE_DEG = 1.5
DC = 1e-3 - 5e-4j
TAPS = 128
DECIM = 8
NFFT = 4096


def lo_harmonics(k):
    # +-1 switch of duty d and edge t_r: c_m = 4 d sinc(m d) sinc(m t_r) (cosine series); c_m/2 at +m.
    d, tr = 0.505, 0.02
    m = np.arange(1, k + 1)
    c = 4.0 * d * np.sinc(m * d) * np.sinc(m * tr)
    return (c / 2.0) * np.exp(1j * 0.1 * m)


def iq_coefficients(gain_db, phase_deg):
    g = 10.0 ** (gain_db / 20.0)
    ph = np.deg2rad(phase_deg)
    return (1 + g * np.exp(-1j * ph)) / 2, (1 - g * np.exp(1j * ph)) / 2


class Chain:
    def __init__(self):
        self.g = lo_harmonics(K).astype(np.complex64)
        mu, eta = iq_coefficients(IQ_GAIN_DB, IQ_PHASE_DEG)
        self.mu, self.eta, self.dc = np.complex64(mu), np.complex64(eta), np.complex64(DC)
        self.a3 = np.float32(A3)
        beta = 0.1102 * (80.0 - 8.7)  # Kaiser's formula for 80 dB
        self.h = ss.firwin(TAPS, 1.0 / DECIM, window=("kaiser", beta)).astype(np.float32)  # cutoff: output Nyquist
        self.hist = np.zeros(TAPS, np.complex64)  # TAPS is a multiple of DECIM: the kept phase stays aligned
        self.phase = 0.0
        self.out = []

    def process(self, x):
        n = x.size
        th = (2.0 * np.pi * ((self.phase + NU * np.arange(n)) % 1.0)).astype(np.float32)
        self.phase = (self.phase + NU * n) % 1.0
        p = np.empty(n, np.complex64)
        p.real = np.cos(th)
        p.imag = np.sin(th)
        lo = np.full(n, self.g[K - 1], np.complex64)
        for k in range(K - 2, -1, -1):
            lo *= p
            lo += self.g[k]
        lo *= p
        pw = x.real * x.real
        pw += x.imag * x.imag
        pw *= self.a3
        pw += np.float32(1.0)
        z = x * pw
        z *= lo
        y = z * self.mu
        y += np.conj(z) * self.eta
        y += self.dc
        buf = np.concatenate((self.hist, y))
        self.hist = y[-TAPS:]
        off = TAPS // DECIM
        self.out.append(ss.upfirdn(self.h, buf, 1, DECIM)[off:off + n // DECIM])

    def finish(self):
        d = np.concatenate(self.out)
        f, pxx = ss.welch(d, fs=1.0, window="blackmanharris", nperseg=NFFT, noverlap=NFFT // 2,
                          return_onesided=False, detrend=False, scaling="spectrum")
        return d, pxx


def make_input(n, seed=1):
    rng = np.random.default_rng(seed)
    x = np.empty(n, np.complex64)
    x.real = rng.standard_normal(n, dtype=np.float32) * np.float32(0.05)
    x.imag = rng.standard_normal(n, dtype=np.float32) * np.float32(0.05)
    t = np.arange(n)
    x += (0.3 * np.exp(2j * np.pi * 0.0123 * t)).astype(np.complex64)
    return x


def deterministic_input(n):
    # The same formula as the C++ side of the cross-check (tests/kernels_test.cpp).
    t = np.arange(n, dtype=np.float64)
    x = 0.4 * np.exp(2j * np.pi * 0.0123 * t) + 0.2 * np.exp(-2j * np.pi * 0.0871 * t + 0.3j)
    return x.astype(np.complex64)


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--samples", type=int, default=1 << 22)
    ap.add_argument("--runs", type=int, default=5)
    ap.add_argument("--block", type=int, default=1 << 16)
    ap.add_argument("--dump", help="write the decimated output of a deterministic input here and exit")
    a = ap.parse_args()
    if a.block % DECIM or a.block < TAPS:
        sys.exit("chain_numpy: --block must be a multiple of %d and at least %d" % (DECIM, TAPS))
    if a.dump:
        c = Chain()
        x = deterministic_input(a.samples - a.samples % a.block)
        for i in range(0, x.size, a.block):
            c.process(x[i:i + a.block])
        d, _ = c.finish()
        d.astype(np.complex64).tofile(a.dump)
        return
    n = a.samples - a.samples % a.block
    x = make_input(n)
    runs = []
    for _ in range(max(1, a.runs)):
        c = Chain()
        t0 = time.perf_counter()
        for i in range(0, n, a.block):
            c.process(x[i:i + a.block])
        c.finish()
        runs.append(n / (time.perf_counter() - t0) / 1e6)
    print(json.dumps({"msps": float(np.median(runs)), "runs_msps": runs, "samples": n, "block": a.block,
                      "numpy": np.__version__, "scipy": scipy.__version__}))


if __name__ == "__main__":
    main()
