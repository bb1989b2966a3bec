"""Benchmark of the physics core: prints a table of wall-clock times (not a test; nothing asserted).

Targets: a pattern on a 1-degree grid for any kind under 50 ms; a 5-element Yagi at 41 frequencies
under 1 s. Run: .venv/bin/python bench/bench_physics.py
"""
from __future__ import annotations

import time

import numpy as np

from registry.physics.impedance import solve_wire_antenna
from registry.physics.patterns import pattern_for_kind
from registry.physics.wave import wavelength_m

F = 300e6
LAM = wavelength_m(F)
CASES = {
    "dipole": {"length_m": 0.48 * LAM, "diameter_m": 0.002},
    "monopole": {"height_m": 0.24 * LAM, "diameter_m": 0.002},
    "folded_dipole": {"length_m": 0.48 * LAM, "diameter_m": 0.002, "spacing_m": 0.02},
    "small_loop": {"diameter_m": 0.02},
    "yagi": {"element_lengths_m": tuple(v * LAM for v in (0.488, 0.466, 0.436, 0.430, 0.426)),
             "element_positions_m": tuple(v * LAM for v in (0.0, 0.2, 0.4, 0.65, 0.95)), "diameter_m": 0.004},
    "linear_array": {"n_elements": 16, "spacing_m": 0.5 * LAM, "taper": "chebyshev", "sidelobe_db": 30.0},
    "slotted_array": {"nx": 24, "ny": 24, "spacing_x_m": 0.7 * LAM, "spacing_y_m": 0.7 * LAM, "taper": "cosine"},
    "parabolic": {"diameter_m": 24 * LAM, "edge_taper_db": 12.0, "taper_exponent": 2},
    "patch": {"length_m": 0.3 * LAM, "width_m": 0.4 * LAM, "substrate_height_m": 0.01 * LAM, "eps_r": 2.2},
}


def best_of(fn, repeats=5):
    times = []
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def main():
    print(f"{'case':40s} {'best of 5':>10s}")
    for kind, geometry in CASES.items():
        dt = best_of(lambda: pattern_for_kind(kind, geometry, F, step_deg=1.0))
        print(f"{'pattern 1 deg grid: ' + kind:40s} {dt * 1e3:8.1f} ms")
    freqs = np.linspace(0.95 * F, 1.05 * F, 41)
    dt = best_of(lambda: solve_wire_antenna("yagi", CASES["yagi"], freqs), repeats=3)
    print(f"{'5-element Yagi, 41 frequencies':40s} {dt * 1e3:8.1f} ms")
    dt = best_of(lambda: solve_wire_antenna("dipole", CASES["dipole"], freqs), repeats=3)
    print(f"{'dipole, 41 frequencies':40s} {dt * 1e3:8.1f} ms")
    convergence_cost()
    folded_rule_cost()
    demo_fleet()


def convergence_cost():
    """Cost of refining the segmentation: a cold solve (refinement included) against a warm one (counts cached)."""
    from registry.physics import segmentation

    for kind in ("dipole", "folded_dipole", "yagi"):
        segmentation.converged_segments.cache_clear()
        t = time.perf_counter()
        sweep = solve_wire_antenna(kind, CASES[kind], [F])
        cold = time.perf_counter() - t
        warm = best_of(lambda: solve_wire_antenna(kind, CASES[kind], [F]), repeats=3)
        seg = sweep.segmentation
        print(f"{'impedance at one freq, cold/warm: ' + kind:40s} {cold * 1e3:8.1f} / {warm * 1e3:.1f} ms "
              f"segments {sweep.segments} after {seg.refinements} refinement(s), last change {seg.change:.2%}")
    segmentation.converged_segments.cache_clear()
    t = time.perf_counter()
    pattern_for_kind("yagi", CASES["yagi"], F)
    print(f"{'Yagi pattern, cold segmentation':40s} {(time.perf_counter() - t) * 1e3:8.1f} ms")
    site_model_cost()


def site_model_cost():
    """What one wire model costs the site (41-point sweep, design point, slopes and resonance search, one
    segmentation: impedance.solve_with_resonance as compute/antenna.py calls it), converged counts against
    the fixed 20 segments on the longest element that the site used before."""
    from registry.physics import segmentation
    from registry.physics.impedance import solve_with_resonance

    freqs = list(np.linspace(0.9 * F, 1.1 * F, 41)) + [F, 0.999 * F, F, 1.001 * F]
    for kind in ("dipole", "monopole", "folded_dipole", "yagi"):
        for label, geometry in (("converged", CASES[kind]), ("fixed 20", {**CASES[kind], "segments": 20})):
            segmentation.converged_segments.cache_clear()
            t = time.perf_counter()
            sweep, _ = solve_with_resonance(kind, geometry, freqs, F, 0.5 * F, 1.5 * F)
            dt = time.perf_counter() - t
            print(f"{f'site model, {label}: {kind}':40s} {dt * 1e3:8.1f} ms segments {sweep.segments}")


def demo_fleet():
    """Every figure of the demo fleet, from a cold start of the content caches (one process, no disk cache)."""
    import datetime
    from pathlib import Path

    from registry.compute import antenna as cache
    from registry.evaluate import evaluate_fleet
    from registry.load.fleet import load_fleet

    fleet = load_fleet(Path(__file__).resolve().parent.parent / "fleet_data")
    from registry.compute import element
    from registry.physics import segmentation

    for cached in (cache._pattern, cache._impedance, cache._raw_grid, element._straight_rule, element._folded_rule,
                   segmentation.converged_segments):
        cached.cache_clear()
    t, cpu = time.perf_counter(), time.process_time()
    evaluate_fleet(fleet, datetime.date(2026, 12, 2), cache_dir=None, workers=1)
    installations = sum(len(a.installations) for a in fleet.aircraft.values())
    print(f"{f'demo fleet, every figure ({installations} inst.)':40s} {(time.perf_counter() - t) * 1e3:8.1f} ms "
          f"(CPU {(time.process_time() - cpu) * 1e3:.0f} ms: less sensitive to other load on the machine)")


def folded_rule_cost():
    """The folded dipole's resonant-length rule (X_in = 0 of the closed loop), cold."""
    from registry.physics import segmentation, wire_path
    from registry.physics.wave import folded_resonant_length_rule

    segmentation.converged_segments.cache_clear()
    wire_path.folded_dipole_solver.cache_clear()
    t = time.perf_counter()
    rule = folded_resonant_length_rule(F, 0.002, 0.02)
    print(f"{'folded-dipole length rule, cold':40s} {(time.perf_counter() - t) * 1e3:8.1f} ms "
          f"({rule.length_m:.4f} m)")


if __name__ == "__main__":
    main()
