"""Speed of the gap-layer coefficients: 10^6 rays of different angles in one call.

Prism (n = 1.5168) | air gap (thickness per ray) | prism, s and p, coherent, angles
spread over 0..80 deg (below and beyond the critical angle). Prints rays per second.

Run: ``python benchmarks/bench_films.py [--rays N] [--repeat K]``.
"""

from __future__ import annotations

import argparse
import pathlib
import sys
import time

import numpy as np

sys.path.insert(0, str(pathlib.Path(__file__).resolve().parents[1]))
from tracer import films  # noqa: E402


def run(rays: int, repeat: int) -> float:
    rng = np.random.default_rng(0)
    cos_angle = np.cos(rng.uniform(0.0, np.radians(80.0), rays))
    thickness = rng.uniform(0.0, 2e-6, rays)
    wavelength = 550e-9
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        s = films.stack(n_in=1.5168, layers=[(1.0, thickness)], n_out=1.5168,
                        wavelength=wavelength, cos_angle=cos_angle)
        best = min(best, time.perf_counter() - t0)
    assert np.all(np.isfinite(s.Rs)) and np.all(np.isfinite(s.Tp))
    return rays / best


def main() -> None:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--rays", type=int, default=1_000_000)
    p.add_argument("--repeat", type=int, default=5)
    a = p.parse_args()
    rate = run(a.rays, a.repeat)
    print(f"gap layer (s and p), {a.rays} rays in one call: {rate / 1e6:.2f} million rays/s (best of {a.repeat})")


if __name__ == "__main__":
    main()
