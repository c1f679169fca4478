"""Time scipy.signal.stft magnitudes on 60 s of 48 kHz mono (float32).

usage: python3 scipy_stft.py FRAMELEN HOP ROUNDS [float32|float64]
prints one line per round: "scipy-DTYPE FRAMELEN HOP WALL CPU" (seconds, wall
clock and process CPU time) for stft + abs,
after one untimed warm-up call.
"""
import sys
import time

import numpy as np
import scipy.signal


def main():
    n, hop, rounds = (int(a) for a in sys.argv[1:4])
    dtype = sys.argv[4] if len(sys.argv) > 4 else "float32"
    fs = 48000
    rng = np.random.default_rng(12345)
    t = np.arange(60 * fs) / fs
    x = (0.3 * np.sin(2 * np.pi * 400 * t) + 0.1 * rng.standard_normal(t.size)).astype(dtype)
    for r in range(rounds + 1):
        t0, c0 = time.perf_counter(), time.process_time()
        _, _, z = scipy.signal.stft(x, fs, window="hann", nperseg=n, noverlap=n - hop,
                                    boundary=None, padded=False)
        mag = np.abs(z)
        t1, c1 = time.perf_counter(), time.process_time()
        if r > 0:
            print(f"scipy-{dtype} {n} {hop} {t1 - t0:.6f} {c1 - c0:.6f}", flush=True)
    print(f"scipy_stft: {mag.shape[1]} frames x {mag.shape[0]} bins, {mag.dtype}", file=sys.stderr)


if __name__ == "__main__":
    main()
