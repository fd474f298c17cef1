#!/usr/bin/env python3
"""Per-call time of CoolProp 8.0.0 (HEOS backend) through its vectorised
Python API, `CoolProp.CoolProp.PropsSI` with numpy arrays, on the states of
engine/benches/helmholtz.rs; the counterpart of that criterion bench.

    pip install CoolProp==8.0.0 numpy
    python3 engine/benches/helmholtz_coolprop.py

Prints, per state and input pair, the median over 7 repetitions of
(time of one PropsSI call on N copies of the state) / N.
"""
import importlib.metadata
import statistics
import time

import numpy as np
import CoolProp.CoolProp as CP

POINTS = [
    ("R134a", "liquid 300K 1.5MPa", 300.0, 1.5e6),
    ("R134a", "vapour 300K 0.3MPa", 300.0, 0.3e6),
    ("R134a", "supercritical 400K 5MPa", 400.0, 5e6),
    ("R134a", "two-phase 263K x=0.5", 263.15, None),
    ("CO2", "liquid 270K 5MPa", 270.0, 5e6),
    ("CO2", "vapour 300K 3MPa", 300.0, 3e6),
    ("CO2", "supercritical 320K 10MPa", 320.0, 10e6),
    ("CO2", "two-phase 263K x=0.5", 263.15, None),
]
N = 2000


def per_call(out, a, av, b, bv, fluid):
    arr_a = np.full(N, av)
    arr_b = np.full(N, bv)
    times = []
    for _ in range(7):
        t0 = time.perf_counter()
        CP.PropsSI(out, a, arr_a, b, arr_b, fluid)
        times.append((time.perf_counter() - t0) / N)
    return statistics.median(times)


def main():
    print(f"CoolProp {importlib.metadata.version('CoolProp')}, N = {N} per call, median of 7")
    for fluid in ("R134a", "CO2"):
        CP.set_reference_state(fluid, "IIR")
    for fluid, label, t, p in POINTS:
        if p is None:
            p = CP.PropsSI("P", "T", t, "Q", 0.5, fluid)
            h = CP.PropsSI("H", "T", t, "Q", 0.5, fluid)
            s = CP.PropsSI("S", "T", t, "Q", 0.5, fluid)
            tp = None
        else:
            h = CP.PropsSI("H", "T", t, "P", p, fluid)
            s = CP.PropsSI("S", "T", t, "P", p, fluid)
            tp = per_call("H", "T", t, "P", p, fluid)
        ph = per_call("T", "P", p, "H", h, fluid)
        ps = per_call("T", "P", p, "S", s, fluid)
        f = lambda x: "-" if x is None else f"{x * 1e6:.2f} us"
        print(f"{fluid:6} {label:26} (T,p) {f(tp):>10}  (p,h) {f(ph):>10}  (p,s) {f(ps):>10}")


if __name__ == "__main__":
    main()
