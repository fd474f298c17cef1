#!/usr/bin/env python3
"""Write the reference Helmholtz-energy equations of state of R134a,
R1234yf, R32, ammonia and CO2 into Rust source (one module per fluid in
engine/src/thermo/helmholtz/).

The coefficients are those of the published papers cited in each generated
file. They are read here from the fluid descriptions that the Python
package CoolProp carries (`CoolProp.CoolProp.get_fluid_param_string(name,
"JSON")`, version printed in the generated header); this script only
reformats them. Every table is checked in the Rust unit tests against
CoolProp's own evaluation of the equation at (T, rho) to 1e-9 relative, so
a copying error would fail those tests.

Reference state: the IIR convention (h = 200 kJ/kg, s = 1 kJ/(kg K) for
saturated liquid at 0 degC) for every fluid. It is carried by the constants
a1, a2 of the ideal part; they are taken here from CoolProp after
`set_reference_state(name, "IIR")`, by evaluating CoolProp's ideal part and
its tau-derivative at one state and subtracting the other ideal terms.

Usage: python3 tests/reference/gen_helmholtz_coef.py   (writes the five files)
"""
import importlib.metadata
import json
import math
import os

import CoolProp.CoolProp as CP

VERSION = importlib.metadata.version("CoolProp")
OUT = os.path.join(os.path.dirname(__file__), "..", "..", "engine", "src", "thermo", "helmholtz")

FLUIDS = [
    {
        "module": "r134a",
        "coolprop": "R134a",
        "static": "R134A",
        "name": "R134a",
        "describe": "R134a (Tillner-Roth & Baehr 1994)",
        "bibtex": "TillnerRoth-JPCRD-1994",
        "citation": "R. Tillner-Roth and H. D. Baehr, An International Standard Formulation for "
        "the Thermodynamic Properties of 1,1,1,2-Tetrafluoroethane (HFC-134a) for Temperatures "
        "from 170 K to 455 K and Pressures up to 70 MPa, J. Phys. Chem. Ref. Data 23 (1994) 657-729",
        "t_max": None,
        "note": "",
    },
    {
        "module": "r1234yf",
        "coolprop": "R1234yf",
        "static": "R1234YF",
        "name": "R1234yf",
        "describe": "R1234yf (Lemmon & Akasaka 2022)",
        "bibtex": "Lemmon-IJT-2022",
        "citation": "E. W. Lemmon and R. Akasaka, An International Standard Formulation for "
        "2,3,3,3-Tetrafluoroprop-1-ene (R1234yf) Covering Temperatures from the Triple-Point "
        "Temperature to 410 K and Pressures up to 100 MPa, Int. J. Thermophys. 43 (2022) 119 "
        "(the current reference equation; it supersedes Richter, McLinden and Lemmon, "
        "J. Chem. Eng. Data 56 (2011) 3254)",
        "t_max": None,
        "note": "CoolProp 8.0.0 carries the 2022 equation of Lemmon and Akasaka (BibTeX key "
        "Lemmon-IJT-2022), not the 2011 equation of Richter et al.; these are its coefficients.",
    },
    {
        "module": "r32",
        "coolprop": "R32",
        "static": "R32",
        "name": "R32",
        "describe": "R32 (Tillner-Roth & Yokozeki 1997)",
        "bibtex": "TillnerRoth-JPCRD-1997",
        "citation": "R. Tillner-Roth and A. Yokozeki, An International Standard Equation of State "
        "for Difluoromethane (R-32) for Temperatures from the Triple Point at 136.34 K to 435 K "
        "and Pressures up to 70 MPa, J. Phys. Chem. Ref. Data 26 (1997) 1273-1328",
        "t_max": None,
        "note": "",
    },
    {
        "module": "ammonia",
        "coolprop": "Ammonia",
        "static": "AMMONIA",
        "name": "ammonia",
        "describe": "ammonia R717 (Gao et al. 2020)",
        "bibtex": "Gao-JPCRD-2020",
        "citation": "K. Gao, J. Wu, P. Zhang and E. W. Lemmon, A Helmholtz Energy Equation of "
        "State for Ammonia, J. Phys. Chem. Ref. Data 49 (2020) 033102",
        "t_max": None,
        "note": "CoolProp 8.0.0 carries the 2020 equation of Gao et al. (BibTeX key "
        "Gao-JPCRD-2020), with its own term type for the last two terms.",
    },
    {
        "module": "co2",
        "coolprop": "CO2",
        "static": "CO2",
        "name": "CO2",
        "describe": "carbon dioxide R744 (Span & Wagner 1996)",
        "bibtex": "Span-JPCRD-1996",
        "citation": "R. Span and W. Wagner, A New Equation of State for Carbon Dioxide Covering "
        "the Fluid Region from the Triple-Point Temperature to 1100 K at Pressures up to 800 MPa, "
        "J. Phys. Chem. Ref. Data 25 (1996) 1509-1596",
        # The paper's title gives 1100 K; CoolProp's file carries T_max = 2000 K
        # (an extrapolation), which this package does not offer.
        "t_max": 1100.0,
        "note": "The upper temperature is the paper's 1100 K (its title); CoolProp's file "
        "carries 2000 K, an extrapolation not offered here.",
    },
]


def num(x):
    r = repr(float(x))
    if "e" not in r and "." not in r and "inf" not in r and "nan" not in r:
        r += ".0"
    return r


def arr(xs):
    return "&[" + ", ".join(num(x) for x in xs) + "]"


def anc_eval(a, t):
    th = max(1 - t / a["T_r"], 0.0)
    s = sum(n * th**e for n, e in zip(a["n"], a["t"]))
    if a["type"] == "rhoLnoexp":
        return a["reducing_value"] * (1 + s)
    f = a["T_r"] / t if a["using_tau_r"] else 1.0
    return a["reducing_value"] * math.exp(f * s)


def ancillary(a, molar_mass, rust):
    kind = a["type"]
    if kind in ("pL", "pV"):
        red = a["reducing_value"]
        form = "Exp"
    elif kind in ("rhoL", "rhoV"):
        red = a["reducing_value"] * molar_mass
        form = "Exp"
    elif kind == "rhoLnoexp":
        red = a["reducing_value"] * molar_mass
        form = "NoExp"
    else:
        raise SystemExit(f"unknown ancillary type {kind}")
    return (
        f"pub static {rust}: Ancillary = Ancillary {{\n"
        f"    form: AncForm::{form},\n"
        f"    using_tau_r: {str(bool(a['using_tau_r'])).lower()},\n"
        f"    t_r: {num(a['T_r'])},\n"
        f"    reducing: {num(red)},\n"
        f"    n: {arr(a['n'])},\n"
        f"    t: {arr(a['t'])},\n"
        f"}};\n"
    )


def main():
    for f in FLUIDS:
        name = f["coolprop"]
        CP.set_reference_state(name, "IIR")
        j = json.loads(CP.get_fluid_param_string(name, "JSON"))
        j = j[0] if isinstance(j, list) else j
        eos = j["EOS"][0]
        assert eos["BibTeX_EOS"] == f["bibtex"], (name, eos["BibTeX_EOS"])
        mm = eos["molar_mass"]
        rm = eos["gas_constant"]
        red = eos["STATES"]["reducing"]
        t_red = red["T"]
        rho_red = red["rhomolar"] * mm
        crit = j["STATES"]["critical"]
        sa = eos["SUPERANCILLARY"]["crit_anc"]
        t_c_eos = sa["Tc / K"]
        rho_c_eos = sa["rhoc / mol/m^3"] * mm
        AS = CP.AbstractState("HEOS", name)
        AS.update(CP.DmassT_INPUTS, rho_c_eos, t_c_eos)
        p_c_eos = AS.p()

        # Ideal part: collect the terms.
        log_tau = 0.0
        power0 = []
        pe = []
        for term in eos["alpha0"]:
            ty = term["type"]
            if ty == "IdealGasHelmholtzLead":
                pass
            elif ty == "IdealGasHelmholtzLogTau":
                log_tau += term["a"]
            elif ty == "IdealGasHelmholtzPower":
                power0 += list(zip(term["n"], term["t"]))
            elif ty == "IdealGasHelmholtzPlanckEinstein":
                pe += list(zip(term["n"], term["t"]))
            elif ty == "IdealGasHelmholtzEnthalpyEntropyOffset":
                pass  # replaced by the IIR a1, a2 below
            else:
                raise SystemExit(f"{name}: unknown ideal term {ty}")

        # a1, a2 of the IIR reference state from CoolProp's ideal part.
        t0, rho0 = 300.0, 1.0
        AS.update(CP.DmassT_INPUTS, rho0, t0)
        tau, delta = t_red / t0, rho0 / rho_red
        rest = math.log(delta) + log_tau * math.log(tau)
        rest_t = log_tau / tau
        for n, t in power0:
            rest += n * tau**t
            rest_t += n * t * tau ** (t - 1)
        for n, th in pe:
            rest += n * math.log(1 - math.exp(-th * tau))
            rest_t += n * th / (math.exp(th * tau) - 1)
        a2 = AS.dalpha0_dTau() - rest_t
        a1 = AS.alpha0() - rest - a2 * tau

        power, gauss, nonan, gao = [], [], [], []
        for term in eos["alphar"]:
            ty = term["type"]
            if ty == "ResidualHelmholtzPower":
                for n, d, t, l in zip(term["n"], term["d"], term["t"], term["l"]):
                    assert d == int(d) and l == int(l)
                    power.append(f"Power {{ n: {num(n)}, d: {int(d)}, t: {num(t)}, l: {int(l)} }}")
            elif ty == "ResidualHelmholtzGaussian":
                for i in range(len(term["n"])):
                    gauss.append(
                        "Gauss { "
                        + ", ".join(
                            f"{k}: {num(term[kk][i])}"
                            for k, kk in [("n", "n"), ("d", "d"), ("t", "t"), ("eta", "eta"),
                                          ("beta", "beta"), ("gamma", "gamma"), ("epsilon", "epsilon")]
                        )
                        + " }"
                    )
            elif ty == "ResidualHelmholtzNonAnalytic":
                for i in range(len(term["n"])):
                    nonan.append(
                        "NonAnalytic { "
                        + ", ".join(
                            f"{k}: {num(term[kk][i])}"
                            for k, kk in [("n", "n"), ("a", "a"), ("b", "b"), ("beta", "beta"),
                                          ("big_a", "A"), ("big_b", "B"), ("big_c", "C"), ("big_d", "D")]
                        )
                        + " }"
                    )
            elif ty == "ResidualHelmholtzGaoB":
                for i in range(len(term["n"])):
                    gao.append(
                        "GaoB { "
                        + ", ".join(
                            f"{k}: {num(term[kk][i])}"
                            for k, kk in [("n", "n"), ("d", "d"), ("t", "t"), ("eta", "eta"),
                                          ("beta", "beta"), ("gamma", "gamma"), ("epsilon", "epsilon"),
                                          ("b", "b")]
                        )
                        + " }"
                    )
            else:
                raise SystemExit(f"{name}: unknown residual term {ty}")

        t_min = eos["Ttriple"]
        t_max = f["t_max"] if f["t_max"] is not None else eos["T_max"]
        p_max = eos["p_max"]
        anc = j["ANCILLARIES"]
        cite = f["citation"]

        def lst(items):
            if not items:
                return "&[]"
            return "&[\n" + "".join(f"    {x},\n" for x in items) + "]"

        out = []
        w = out.append
        w(f"//! {f['name']} by its reference equation of state:")
        w(f"//! {cite}.")
        w("//!")
        w("//! Generated by tests/reference/gen_helmholtz_coef.py from the fluid")
        w(f"//! description carried by the Python package CoolProp {VERSION}")
        w(f"//! (`get_fluid_param_string(\"{name}\", \"JSON\")`, equation key {f['bibtex']}).")
        if f["note"]:
            w(f"//! {f['note']}")
        w("//! Do not edit by hand.")
        w("")
        w("use super::{AncForm, Ancillary, Coefficients, GaoB, Gauss, Ideal, Melting, NonAnalytic, Power};")
        w("")
        w(f"/// Ideal part (paper's alpha0), with a1 and a2 set for the IIR reference state")
        w(f"/// (h = 200 kJ/kg, s = 1 kJ/(kg K) for saturated liquid at 0 degC).")
        w(f"/// Source: {cite}.")
        w("pub static IDEAL: Ideal = Ideal {")
        w(f"    a1: {num(a1)},")
        w(f"    a2: {num(a2)},")
        w(f"    log_tau: {num(log_tau)},")
        w(f"    power: &[{', '.join(f'({num(n)}, {num(t)})' for n, t in power0)}],")
        w(f"    planck_einstein: &[{', '.join(f'({num(n)}, {num(t)})' for n, t in pe)}],")
        w("};")
        w("")
        w(f"/// Residual part, power and exponential terms n d^d t^t exp(-d^l).")
        w(f"/// Source: {cite}.")
        w(f"pub static POWER: &[Power] = {lst(power)};")
        w("")
        w(f"/// Residual part, Gaussian bell-shaped terms. Source: {cite}.")
        w(f"pub static GAUSS: &[Gauss] = {lst(gauss)};")
        w("")
        w(f"/// Residual part, non-analytic terms near the critical point. Source: {cite}.")
        w(f"pub static NON_ANALYTIC: &[NonAnalytic] = {lst(nonan)};")
        w("")
        w(f"/// Residual part, terms n d^d t^t exp(eta (d - eps)^2 + 1 / (beta (t - gamma)^2 + b))")
        w(f"/// (eta and beta with the signs CoolProp stores). Source: {cite}.")
        w(f"pub static GAO: &[GaoB] = {lst(gao)};")
        w("")
        w("/// The equation: constants and term tables.")
        w("pub static COEFFICIENTS: Coefficients = Coefficients {")
        w(f"    molar_mass: {num(mm)},")
        w(f"    r: {num(rm)} / {num(mm)},")
        w(f"    t_red: {num(t_red)},")
        w(f"    rho_red: {num(rho_red)},")
        w("    ideal: &IDEAL,")
        w("    power: POWER,")
        w("    gauss: GAUSS,")
        w("    non_analytic: NON_ANALYTIC,")
        w("    gao: GAO,")
        w("};")
        w("")
        w("/// Critical point as CoolProp carries it for this equation: T (K), p (Pa), rho (kg/m^3).")
        w(f"pub const CRITICAL: (f64, f64, f64) = ({num(crit['T'])}, {num(crit['p'])}, {num(crit['rhomolar'] * mm)});")
        w("/// The equation's own critical point (top of its two-phase dome), from the")
        w("/// critical expansion carried with CoolProp's superancillary: T (K), p (Pa), rho (kg/m^3).")
        w(f"pub const CRITICAL_EOS: (f64, f64, f64) = ({num(t_c_eos)}, {num(p_c_eos)}, {num(rho_c_eos)});")
        w(f"/// Range of validity: T from the triple point {num(t_min)} K to {num(t_max)} K, p up to {num(p_max)} Pa.")
        w(f"pub const T_MIN: f64 = {num(t_min)};")
        w(f"pub const T_MAX: f64 = {num(t_max)};")
        w(f"pub const P_MAX: f64 = {num(p_max)};")
        w("/// Saturation pressure at the triple-point temperature, Pa (as CoolProp carries it).")
        w(f"pub const P_TRIPLE: f64 = {num(eos['STATES']['sat_min_vapor']['p'])};")
        w("")
        # Worst relative deviation of the pressure ancillary from the phase
        # equilibrium over the dome (sampled), times 3 (at least 0.5 %): a
        # (T, p) pair closer than this to the ancillary pressure is checked
        # against the exact saturation pressure (the Rust tests confirm the
        # band on their own grid).
        worst = 0.0
        ntt = 400
        for i in range(ntt):
            tt = t_min + (t_c_eos - 0.05 - t_min) * i / (ntt - 1)
            AS.update(CP.QT_INPUTS, 0, tt)
            worst = max(worst, abs(anc_eval(anc["pS"], tt) / AS.p() - 1))
        band = max(5e-3, 3 * worst)
        w("/// Relative band around the ancillary saturation pressure within which a (T, p) pair")
        w("/// is checked against the exact phase equilibrium (3 x the worst deviation found).")
        w(f"pub const ANC_P_BAND: f64 = {num(float('%.2g' % band))};")
        w("")
        ml = anc.get("melting_line")
        if ml is not None:
            assert ml["type"] == "polynomial_in_Theta" and len(ml["parts"]) == 1, ml
            part = ml["parts"][0]
            w("/// Melting pressure p_m = p_0 (1 + sum a (T/T_0 - 1)^t) for T from T_0 to T_max")
            w(f"/// (equation key {ml['BibTeX']}); fluid states need p <= p_m. Source: {cite}.")
            w("pub static MELTING: Option<Melting> = Some(Melting {")
            w(f"    t_0: {num(part['T_0'])},")
            w(f"    p_0: {num(part['p_0'])},")
            w(f"    t_max: {num(part['T_max'])},")
            w(f"    terms: &[{', '.join(f'({num(a)}, {num(t)})' for a, t in zip(part['a'], part['t']))}],")
            w("});")
        else:
            w("/// No melting line is carried for this fluid (its range stays below it).")
            w("pub static MELTING: Option<Melting> = None;")
        w("")
        w("// Ancillary equations for starting values, as carried by CoolProp")
        w("// (fits to the equation of state).")
        w(ancillary(anc["pS"], mm, "ANC_P"))
        w(ancillary(anc["rhoL"], mm, "ANC_RHO_L"))
        w(ancillary(anc["rhoV"], mm, "ANC_RHO_V"))
        text = "\n".join(out)
        path = os.path.join(OUT, f["module"] + ".rs")
        with open(path, "w") as fh:
            fh.write(text)
        print("wrote", path)


if __name__ == "__main__":
    main()
