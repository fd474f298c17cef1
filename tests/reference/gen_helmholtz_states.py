#!/usr/bin/env python3
"""Generate tests/reference/helmholtz_<fluid>.csv and helmholtz_cycles.csv:
reference states of R134a, R1234yf, R32, ammonia and CO2 computed with the
Python package CoolProp (version in each header; HEOS backend, i.e. the
same reference equations of state), with the IIR reference state set
explicitly for every fluid (`set_reference_state(name, "IIR")`: h = 200
kJ/kg, s = 1 kJ/(kg K) for saturated liquid at 0 degC; CoolProp's default
differs between fluids).

Run once; the tables are committed and read by the Rust tests (cargo test
needs no Python):

    pip install CoolProp==8.0.0
    python3 tests/reference/gen_helmholtz_states.py

Rows (fixed random seed, so the tables are reproducible), kind:
- eos:  the equation itself at (T, rho) of every single-phase state below:
        p, h, s, u, cv, cp, w (CoolProp update DmassT_INPUTS);
- tp:   (T, p) states over the valid range: liquid, vapour, supercritical
        and near-critical (pairs within 0.2 % of the saturation pressure
        left out): rho, h, s, cv, cp, w;
- ph, ps: (p, h) and (p, s) states from single-phase states above and
        two-phase states (random quality, and x = 0 and x = 1 exactly):
        T, rho, h, s, x (x empty when single-phase);
- satt, satp: saturation at T and at p: p (T), rho', rho'', h', h'', s', s'';
- crit, nbp, triple: the critical point as CoolProp carries it for the
        equation, the normal boiling point (T at 101.325 kPa, none for CO2,
        which sublimes), the triple-point temperature and its saturation
        pressure.
helmholtz_cycles.csv: a simple refrigeration cycle per fluid (saturated
vapour leaves the evaporator, compressor with isentropic efficiency,
saturated liquid leaves the condenser, or for CO2 a gas cooler at given
pressure and outlet temperature, isenthalpic valve): COP, discharge
temperature, valve-outlet quality.
"""
import importlib.metadata
import math
import os
import random

import CoolProp.CoolProp as CP

VERSION = importlib.metadata.version("CoolProp")
HERE = os.path.dirname(__file__)

FLUIDS = [
    ("r134a", "R134a"),
    ("r1234yf", "R1234yf"),
    ("r32", "R32"),
    ("ammonia", "Ammonia"),
    ("co2", "CO2"),
]

# The paper's upper temperature where it differs from CoolProp's T_max.
T_MAX = {"CO2": 1100.0}

COLS = ["kind", "T", "p", "rho", "h", "s", "u", "cv", "cp", "w", "x"]


def g(x):
    return "" if x is None else repr(float(x))


def main():
    cyc = open(os.path.join(HERE, "helmholtz_cycles.csv"), "w")
    cyc.write(f"# Refrigeration cycles by CoolProp {VERSION} (HEOS), tests/reference/gen_helmholtz_states.py.\n")
    cyc.write("# Reference state IIR. Units SI: K, Pa, J/kg. Gas cooler (CO2): p_high given, T_out given.\n")
    cyc.write("fluid,T_evap,T_cond_or_gc_out,p_high,eta,p_low,h1,s1,h2,T2,h3,x4,cop\n")
    for module, name in FLUIDS:
        rnd = random.Random(20261203)
        CP.set_reference_state(name, "IIR")
        AS = CP.AbstractState("HEOS", name)
        tmin = CP.PropsSI("Ttriple", name)
        tmax = T_MAX.get(name, CP.PropsSI("Tmax", name))
        pmax = CP.PropsSI("pmax", name)
        tc = CP.PropsSI("Tcrit", name)
        pc = CP.PropsSI("pcrit", name)
        rows = []

        def psat(t):
            AS.update(CP.QT_INPUTS, 0, t)
            return AS.p()

        def single(t, p):
            AS.update(CP.PT_INPUTS, p, t)
            return dict(T=t, p=p, rho=AS.rhomass(), h=AS.hmass(), s=AS.smass(), u=AS.umass(),
                        cv=AS.cvmass(), cp=AS.cpmass(), w=AS.speed_sound())

        tp = []
        # Random (T, p) over the range: ln p uniform from 1 kPa (or the
        # triple-point pressure) to p_max.
        plo = max(1e3, CP.PropsSI("ptriple", name) * 1.01)
        while len(tp) < 240:
            t = rnd.uniform(tmin + 0.5, tmax)
            p = math.exp(rnd.uniform(math.log(plo), math.log(pmax)))
            if t < tc and abs(p / psat(t) - 1) < 2e-3:
                continue
            try:
                tp.append(single(t, p))
            except ValueError:
                continue
        # Liquid and vapour near saturation, near-critical and supercritical.
        for _ in range(40):
            t = rnd.uniform(tmin + 0.5, tc - 1.0)
            f = rnd.choice([0.9, 0.98, 1.02, 1.2, 2.0])
            tp.append(single(t, psat(t) * f))
        for _ in range(40):
            t = tc * rnd.uniform(0.99, 1.05)
            p = pc * rnd.uniform(0.8, 1.3)
            if t < tc and abs(p / psat(t) - 1) < 2e-3:
                continue
            tp.append(single(t, p))
        for st in tp:
            rows.append(dict(kind="tp", **st))
        for st in tp:
            AS.update(CP.DmassT_INPUTS, st["rho"], st["T"])
            rows.append(dict(kind="eos", T=st["T"], p=AS.p(), rho=st["rho"], h=AS.hmass(), s=AS.smass(),
                             u=AS.umass(), cv=AS.cvmass(), cp=AS.cpmass(), w=AS.speed_sound()))
        # (p, h) and (p, s): single-phase states from the (T, p) list, and
        # two-phase states.
        for st in rnd.sample(tp, 100):
            rows.append(dict(kind="ph", T=st["T"], p=st["p"], rho=st["rho"], h=st["h"], s=st["s"]))
        for st in rnd.sample(tp, 100):
            rows.append(dict(kind="ps", T=st["T"], p=st["p"], rho=st["rho"], h=st["h"], s=st["s"]))
        for i in range(60):
            p = math.exp(rnd.uniform(math.log(max(plo, CP.PropsSI("ptriple", name) * 1.01)), math.log(pc * 0.98)))
            x = [0.0, 1.0][i] if i < 2 else rnd.uniform(0.0, 1.0)
            if i in (2, 3):
                x = [0.0, 1.0][i - 2]
                p = pc * 0.95
            AS.update(CP.PQ_INPUTS, p, x)
            kind = "ph" if i % 2 == 0 or i < 4 else "ps"
            rows.append(dict(kind=kind, T=AS.T(), p=p, rho=AS.rhomass(), h=AS.hmass(), s=AS.smass(), x=x))
            if i < 4:
                rows.append(dict(kind="ps", T=AS.T(), p=p, rho=AS.rhomass(), h=AS.hmass(), s=AS.smass(), x=x))
        # Saturation at T and at p.
        ts = [tmin + 0.01] + [rnd.uniform(tmin, tc - 0.5) for _ in range(36)] + [tc - 0.3, tc - 0.1]
        for t in ts:
            AS.update(CP.QT_INPUTS, 0, t)
            p, rl, hl, sl = AS.p(), AS.rhomass(), AS.hmass(), AS.smass()
            AS.update(CP.QT_INPUTS, 1, t)
            rows.append(dict(kind="satt", T=t, p=p, rho=rl, h=hl, s=sl))
            rows.append(dict(kind="satt_v", T=t, p=AS.p(), rho=AS.rhomass(), h=AS.hmass(), s=AS.smass()))
        pts = [math.exp(rnd.uniform(math.log(CP.PropsSI("ptriple", name) * 1.01), math.log(pc * 0.999)))
               for _ in range(36)] + [0.99 * pc, 0.995 * pc]
        for p in pts:
            AS.update(CP.PQ_INPUTS, p, 0)
            t, rl, hl, sl = AS.T(), AS.rhomass(), AS.hmass(), AS.smass()
            AS.update(CP.PQ_INPUTS, p, 1)
            rows.append(dict(kind="satp", T=t, p=p, rho=rl, h=hl, s=sl))
            rows.append(dict(kind="satp_v", T=AS.T(), p=p, rho=AS.rhomass(), h=AS.hmass(), s=AS.smass()))
        rows.append(dict(kind="crit", T=tc, p=pc, rho=CP.PropsSI("rhocrit", name)))
        if name != "CO2":
            rows.append(dict(kind="nbp", T=CP.PropsSI("T", "P", 101325.0, "Q", 0, name), p=101325.0))
        rows.append(dict(kind="triple", T=tmin, p=psat(tmin)))

        path = os.path.join(HERE, f"helmholtz_{module}.csv")
        with open(path, "w") as fh:
            fh.write(f"# {name} reference states by CoolProp {VERSION} (HEOS backend), "
                     "tests/reference/gen_helmholtz_states.py.\n")
            fh.write("# Reference state IIR (set_reference_state). Units SI: K, Pa, kg/m^3, J/kg, J/(kg K), m/s.\n")
            fh.write(",".join(COLS) + "\n")
            for r in rows:
                fh.write(",".join([r["kind"]] + [g(r.get(c)) for c in COLS[1:]]) + "\n")
        print("wrote", path, len(rows), "rows")

        # Refrigeration cycle.
        eta = 0.75
        if name == "CO2":
            te, tout, ph = 263.15, 308.15, 9.0e6
        else:
            te, tout = 263.15, 313.15
            AS.update(CP.QT_INPUTS, 0, tout)
            ph = AS.p()
        AS.update(CP.QT_INPUTS, 1, te)
        pl, h1, s1 = AS.p(), AS.hmass(), AS.smass()
        AS.update(CP.PSmass_INPUTS, ph, s1)
        h2s = AS.hmass()
        h2 = h1 + (h2s - h1) / eta
        AS.update(CP.HmassP_INPUTS, h2, ph)
        t2 = AS.T()
        if name == "CO2":
            AS.update(CP.PT_INPUTS, ph, tout)
        else:
            AS.update(CP.QT_INPUTS, 0, tout)
        h3 = AS.hmass()
        AS.update(CP.HmassP_INPUTS, h3, pl)
        x4 = AS.Q()
        cop = (h1 - h3) / (h2 - h1)
        cyc.write(",".join([module] + [g(v) for v in (te, tout, ph, eta, pl, h1, s1, h2, t2, h3, x4, cop)]) + "\n")
    cyc.close()


if __name__ == "__main__":
    main()
