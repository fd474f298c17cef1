//! The data sheet (protected): package information, the input values
//! sheaf used (with a "differs" cell each, and where an overridden value
//! came from), every field of every state in SI (the named cells the
//! formulas and the state-point table use), and the NASA coefficients of
//! the ideal gases used (a `gas_mix` mixture's blended ones).

use rust_xlsxwriter::{Format, Formula, Worksheet};

use super::names::{self, NameKind};
use super::plan::{Basis, NodeRows};
use super::style::{fit_height, page_setup, sig_format_n};
use super::writer::{DATA, SheetLayout, num_result};
use crate::eval::Value;
use crate::thermo::{Field, Substance};

type XResult<T> = Result<T, rust_xlsxwriter::XlsxError>;

const WIDTHS: [f64; 14] = [
    16.0, 13.0, 11.0, 12.0, 11.0, 12.0, 11.0, 11.0, 11.0, 11.0, 10.0, 9.0, 10.0, 18.0,
];

pub(super) fn write(l: &mut SheetLayout) -> XResult<Worksheet> {
    let mut data = Worksheet::new();
    data.set_name(DATA)?;
    for (c, w) in WIDTHS.iter().enumerate() {
        data.set_column_width(c as u16, *w)?;
    }
    page_setup(&mut data, true);
    data.set_formula_result_default("");
    let st = &l.st;
    data.write_string_with_format(
        0,
        0,
        "Package information and the values sheaf used",
        &st.title,
    )?;
    let info_rows = [
        ("sheaf package", String::new(), None),
        (
            "source file",
            l.info.source_name.clone(),
            Some(super::NAME_SOURCE),
        ),
        (
            "source sha256",
            l.info.source_sha256.clone(),
            Some(super::NAME_SHA),
        ),
        (
            "sheaf version",
            l.info.tool_version.clone(),
            Some(super::NAME_VERSION),
        ),
        ("written", l.info.date.clone(), None),
    ];
    let mut defs = Vec::new();
    for (k, (label, value, name)) in info_rows.iter().enumerate() {
        let r = 2 + k as u32;
        data.write_string_with_format(r, 0, *label, &st.label)?;
        // The value cell spans several columns: the sha256 prints whole.
        data.merge_range(r, 1, r, 7, value, &Format::new())?;
        if let Some(n) = name {
            defs.push((n.to_string(), r, 1u16));
        }
    }
    let mut r = 8;
    data.write_string_with_format(
        r,
        0,
        "Inputs as used by sheaf (a formula cell compares each with the calculation sheet)",
        &st.label,
    )?;
    r += 1;
    let heads = ["Input", "Value used", "Unit", "Now in sheet", "Differs (1)"];
    for (c, h) in heads.iter().enumerate() {
        data.write_string_with_format(r, c as u16, *h, &st.header)?;
    }
    data.merge_range(r, 5, r, 9, "Given as", &st.header)?;
    r += 1;
    let first = r;
    for (i, _) in l.input_rows.clone() {
        let Some(name) = l.model.nodes()[i].name.as_ref().map(|n| n.name.clone()) else {
            continue;
        };
        let Some((sh, _)) = super::input_shown(l.model, i) else {
            continue;
        };
        let rn = names::name_of(NameKind::Recorded, &name);
        let inn = names::name_of(NameKind::Input, &name);
        let dn = names::name_of(NameKind::Differs, &name);
        data.write_string(r, 0, &name)?;
        data.write_number(r, 1, sh.value)?;
        data.write_string(r, 2, &sh.unit)?;
        data.write_formula(
            r,
            3,
            Formula::new(inn.clone()).set_result(num_result(sh.value)),
        )?;
        data.write_formula(
            r,
            4,
            Formula::new(format!("IF(ABS({inn}-{rn})>1E-12*ABS({rn}),1,0)")).set_result("0"),
        )?;
        let given = match l.model.override_of(i) {
            Some(o) => format!("{} ({})", o.text, o.source),
            None => "worksheet".to_string(),
        };
        data.merge_range(r, 5, r, 9, &given, &Format::new())?;
        defs.push((rn, r, 1));
        defs.push((dn, r, 4));
        r += 1;
    }
    if r > first {
        l.differs_rows = Some((first, r - 1));
    }

    // Every field of every state, SI: the named cells.
    let states: Vec<usize> = l.report.states.rows.iter().map(|s| s.node).collect();
    if !states.is_empty() {
        r += 1;
        data.write_string_with_format(
            r,
            0,
            "State points, every field in SI (the named cells the formulas and the state table use)",
            &st.label,
        )?;
        r += 1;
        data.write_string_with_format(r, 0, "State", &st.header)?;
        for (k, f) in Field::ALL.iter().enumerate() {
            let unit = crate::units::si_unit(super::plan::field_dim(*f));
            let h = if unit.is_empty() {
                f.name().to_string()
            } else {
                format!("{} {unit}", f.name())
            };
            data.write_string_with_format(r, 1 + k as u16, h, &st.header)?;
        }
        data.write_string_with_format(r, 13, "Flag", &st.header)?;
        r += 1;
        for node in states {
            let Some(NodeRows::Compound { head, fields, .. }) = &l.plan[node] else {
                continue;
            };
            data.write_string_with_format(r, 0, head, &st.label)?;
            let mut any_engine = false;
            for (k, f) in Field::ALL.iter().enumerate() {
                let col = 1 + k as u16;
                let sym = format!("{head}.{}", f.name());
                let Some(row) = fields.iter().find(|x| x.symbol == sym) else {
                    data.write_string_with_format(r, col, "–", &st.live_center)?;
                    continue;
                };
                let Some(si) = row.si else { continue };
                let fmt_of = |base: &Format| base.clone().set_num_format(sig_format_n(si, 7));
                match &row.basis {
                    Basis::Live(e) => {
                        data.write_formula_with_format(
                            r,
                            col,
                            Formula::new(&e.text).set_result(num_result(si)),
                            &fmt_of(&st.live),
                        )?;
                    }
                    _ => {
                        any_engine = true;
                        data.write_number_with_format(r, col, si, &fmt_of(&st.engine))?;
                    }
                }
                defs.push((row.si_name.clone(), r, col));
            }
            let text = if any_engine {
                "stale: re-run sheaf"
            } else {
                "stale: uses an engine value"
            };
            if let Some(f) = super::plan::flag_formula(l.model, &l.stale[node], text) {
                data.write_formula_with_format(r, 13, Formula::new(f).set_result(""), &st.flag)?;
            }
            r += 1;
        }
    }

    // Ideal-gas polynomial data for the gases used.
    let mut gases: Vec<crate::thermo::ideal_gas::IdealGas> = Vec::new();
    for v in l.model.values() {
        let sub = match v {
            Value::Substance(s) => Some(&**s),
            Value::State(sv) => Some(&*sv.sub),
            _ => None,
        };
        // Named gases, air and `gas_mix` mixtures (their blended
        // coefficients, under the key of their composition).
        if let Some(Substance::IdealGas(g)) = sub
            && !gases
                .iter()
                .any(|x| super::formula::gas_key(x) == super::formula::gas_key(g))
        {
            gases.push(g.clone());
        }
    }
    if !gases.is_empty() {
        r += 1;
        let text = "Ideal-gas data: NASA 7-coefficient polynomials (McBride, Zehe & Gordon, \
                    NASA/TP-2002-211556), molar, dimensionless; R in J/(kg K); hoff = R * H/R(298.15 K) in J/kg. \
                    A mixture's coefficients are the mole-fraction averages of its gases', a7 \
                    with the ideal mixing entropy -sum(x ln x)";
        data.merge_range(r, 0, r, 13, text, &st.label_wrap)?;
        data.set_row_height(r, fit_height(text, WIDTHS.iter().sum()))?;
        r += 1;
        for (c, h) in [
            "gas / range",
            "a1",
            "a2",
            "a3",
            "a4",
            "a5",
            "a6",
            "a7",
            "R",
            "hoff",
        ]
        .iter()
        .enumerate()
        {
            data.write_string_with_format(r, c as u16, *h, &st.header)?;
        }
        r += 1;
        let sci = Format::new().set_num_format("0.000000E+00");
        for g in &gases {
            let key = super::formula::gas_key(g);
            let coef = g.coefficients();
            for (hi, label) in [(false, "200-1000 K"), (true, "1000-6000 K")] {
                data.write_string(r, 0, format!("{} {label}", g.name()))?;
                for (k, a) in coef[usize::from(hi)].iter().enumerate() {
                    data.write_number_with_format(r, 1 + k as u16, *a, &sci)?;
                    defs.push((
                        super::formula::gas_coef_name(&key, hi, k + 1),
                        r,
                        1 + k as u16,
                    ));
                }
                if !hi {
                    data.write_number_with_format(
                        r,
                        8,
                        g.r(),
                        &Format::new().set_num_format(sig_format_n(g.r(), 7)),
                    )?;
                    data.write_number_with_format(r, 9, g.h_offset(), &sci)?;
                    defs.push((super::formula::gas_r_name(&key), r, 8));
                    defs.push((super::formula::gas_hoff_name(&key), r, 9));
                }
                r += 1;
            }
        }
    }
    for (n, row, col) in defs {
        l.define(n, DATA, row, col);
    }
    data.protect();
    Ok(data)
}
