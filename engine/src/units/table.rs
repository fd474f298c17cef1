//! The unit table: symbols, names, dimensions and conversion factors.
//!
//! Factors come from the `uom` crate (0.38) wherever it defines the unit,
//! read through `uom::Conversion::coefficient()` / `constant()`. The few
//! values typed here are definitions, each with its source:
//! - SI prefixes: powers of ten by definition (SI Brochure, 9th ed. 2019,
//!   Table 7; ronna/quetta/ronto/quecto added by the 27th CGPM, 2022);
//!   `uom` 0.38 has no ronna..quetta.
//! - avoirdupois pound: 0.45359237 kg exactly (international yard and pound
//!   agreement of 1959; NIST SP 811 (2008) Appendix B.8). `uom` 0.38 stores
//!   it rounded to 4.535924e-1, and derives its `pound_force` (4.448222) and
//!   `pound_force_per_square_inch` (6894.757889...) from the rounded values,
//!   which differs from NIST SP 811 B.8 (6.894 757 E+03) in the 7th digit.
//!   So lb is typed exactly and lbf = lb * g_n (g_n from uom's
//!   `kilogram_force`), psi = lbf / in^2 (in from uom).
//! - gauge pressures: absolute = gauge + one standard atmosphere, with the
//!   atmosphere from uom (`pressure::atmosphere`, 101325 Pa).
//! - gas volumes at reference conditions are AMOUNTS OF SUBSTANCE: one
//!   `Nm3` is the amount of an ideal gas filling 1 m^3 at 0 °C and
//!   101.325 kPa (DIN 1343), n = p V / (R_u T) = 44.615 mol; one `Sm3` the
//!   same at 15 °C and 101.325 kPa (ISO 13443), 42.293 mol; one `scf` a
//!   cubic foot at 60 °F and 14.696 psi (U.S. gas-industry standard
//!   conditions), 1.1953 mol. R_u = 8.314462618 J/(mol K) (CODATA 2018,
//!   exact); the volume, temperature and pressure units from uom. So
//!   `4800 Nm3/h` is a molar flow, and `ndot * gas.M` a mass flow.
//! - `Nm` alone is NOT a unit: the newton metre is written `N*m`. Decided
//!   so because `Nm` next to `Nm3` (normal cubic metres) and `nm`
//!   (nanometre) invites misreading; an unknown `Nm` gets a message naming
//!   both (see `units::atom`). `Nm3` is its own atom, not `Nm` cubed.

use std::collections::HashMap;
use std::sync::OnceLock;

use uom::{ConstantOp, Conversion};

use super::{Affinity, Dim};

/// Coherent-SI factor of a uom unit.
fn c<U: Conversion<f64, T = f64>>() -> f64 {
    U::coefficient()
}

/// Coherent-SI offset of a uom unit: `si = v * coefficient + offset`.
/// (uom converts as `(v + constant) * coefficient`.) `+ 0.0` turns uom's
/// `-0.0` for offset-free units into `+0.0`.
fn off<U: Conversion<f64, T = f64>>() -> f64 {
    U::constant(ConstantOp::Add) * U::coefficient() + 0.0
}

/// The international avoirdupois pound in kg, exact by definition (1959
/// international yard and pound agreement; NIST SP 811 (2008) App. B.8).
pub(crate) const POUND_KG: f64 = 0.453_592_37;

/// An SI prefix: accepted spellings and power of ten.
pub(crate) struct Prefix {
    pub symbol: &'static str,
    pub exp: i32,
}

/// SI prefixes (SI Brochure 9th ed., Table 7, with the 2022 additions),
/// longest spellings first so that `da` is tried before `d`. `µ` is
/// accepted as MICRO SIGN (U+00B5), GREEK SMALL LETTER MU (U+03BC) and `u`.
pub(crate) const PREFIXES: &[Prefix] = &[
    Prefix {
        symbol: "da",
        exp: 1,
    },
    Prefix {
        symbol: "Q",
        exp: 30,
    },
    Prefix {
        symbol: "R",
        exp: 27,
    },
    Prefix {
        symbol: "Y",
        exp: 24,
    },
    Prefix {
        symbol: "Z",
        exp: 21,
    },
    Prefix {
        symbol: "E",
        exp: 18,
    },
    Prefix {
        symbol: "P",
        exp: 15,
    },
    Prefix {
        symbol: "T",
        exp: 12,
    },
    Prefix {
        symbol: "G",
        exp: 9,
    },
    Prefix {
        symbol: "M",
        exp: 6,
    },
    Prefix {
        symbol: "k",
        exp: 3,
    },
    Prefix {
        symbol: "h",
        exp: 2,
    },
    Prefix {
        symbol: "d",
        exp: -1,
    },
    Prefix {
        symbol: "c",
        exp: -2,
    },
    Prefix {
        symbol: "m",
        exp: -3,
    },
    Prefix {
        symbol: "\u{b5}",
        exp: -6,
    },
    Prefix {
        symbol: "\u{3bc}",
        exp: -6,
    },
    Prefix {
        symbol: "u",
        exp: -6,
    },
    Prefix {
        symbol: "n",
        exp: -9,
    },
    Prefix {
        symbol: "p",
        exp: -12,
    },
    Prefix {
        symbol: "f",
        exp: -15,
    },
    Prefix {
        symbol: "a",
        exp: -18,
    },
    Prefix {
        symbol: "z",
        exp: -21,
    },
    Prefix {
        symbol: "y",
        exp: -24,
    },
    Prefix {
        symbol: "r",
        exp: -27,
    },
    Prefix {
        symbol: "q",
        exp: -30,
    },
];

/// Multiply `factor` by 10^exp, dividing for negative exponents so that
/// e.g. milli of 1 gives exactly the nearest double to 1e-3.
pub(crate) fn scale_pow10(factor: f64, exp: i32) -> f64 {
    if exp >= 0 {
        factor * 10f64.powi(exp)
    } else {
        factor / 10f64.powi(-exp)
    }
}

/// One row of the table.
#[derive(Clone, Debug)]
pub(crate) struct Entry {
    pub symbol: &'static str,
    /// Other accepted spellings (`°C` for `degC`).
    pub aliases: &'static [&'static str],
    pub name: &'static str,
    pub dim: Dim,
    pub factor: f64,
    pub offset: f64,
    pub affinity: Affinity,
    /// Takes SI prefixes (`k` + `Pa`).
    pub prefixable: bool,
    pub note: &'static str,
}

const L: Dim = Dim::LENGTH;
const M: Dim = Dim::MASS;
const T: Dim = Dim::TIME;
const TH: Dim = Dim::TEMPERATURE;
const N: Dim = Dim::AMOUNT;
const NONE: Dim = Dim::NONE;
const P: Dim = Dim::PRESSURE;
const E: Dim = Dim::ENERGY;
const W: Dim = Dim::POWER;
const F: Dim = Dim([1, 1, -2, 0, 0, 0, 0]);
const V: Dim = Dim([3, 0, 0, 0, 0, 0, 0]);
const HZ: Dim = Dim([0, 0, -1, 0, 0, 0, 0]);
const VF: Dim = Dim([3, 0, -1, 0, 0, 0, 0]);

struct RowBuilder {
    e: Entry,
}

/// Builder shorthand: `row(symbol, name, dim, factor)`.
fn row(symbol: &'static str, name: &'static str, dim: Dim, factor: f64) -> RowBuilder {
    RowBuilder {
        e: Entry {
            symbol,
            aliases: &[],
            name,
            dim,
            factor,
            offset: 0.0,
            affinity: Affinity::Neutral,
            prefixable: false,
            note: "",
        },
    }
}

impl RowBuilder {
    fn prefixable(mut self) -> RowBuilder {
        self.e.prefixable = true;
        if self.e.note.is_empty() {
            self.e.note = "takes SI prefixes";
        }
        self
    }
    fn aliases(mut self, a: &'static [&'static str]) -> RowBuilder {
        self.e.aliases = a;
        self
    }
    fn offset(mut self, o: f64, aff: Affinity) -> RowBuilder {
        self.e.offset = o;
        self.e.affinity = aff;
        self
    }
    fn affinity(mut self, aff: Affinity) -> RowBuilder {
        self.e.affinity = aff;
        self
    }
    fn note(mut self, n: &'static str) -> RowBuilder {
        self.e.note = n;
        self
    }
}

fn build() -> Vec<Entry> {
    use uom::si::{
        amount_of_substance as amt, angle, energy, force, frequency, length, mass, power,
        pressure as pr, ratio, temperature_interval as dt, thermodynamic_temperature as tt, time,
        volume,
    };
    let lbf = POUND_KG * c::<force::kilogram_force>();
    let inch = c::<length::inch>();
    let psi = lbf / (inch * inch);
    let atm = c::<pr::atmosphere>();
    // Gas amounts at reference conditions: n = p V / (R_u T).
    let r_u = crate::thermo::consts::R_U;
    let kelvin_of = |v: f64, f: f64, o: f64| v * f + o;
    let t0 = kelvin_of(0.0, c::<tt::degree_celsius>(), off::<tt::degree_celsius>());
    let t15 = kelvin_of(15.0, c::<tt::degree_celsius>(), off::<tt::degree_celsius>());
    let t60f = kelvin_of(
        60.0,
        c::<tt::degree_fahrenheit>(),
        off::<tt::degree_fahrenheit>(),
    );
    let m3 = c::<volume::cubic_meter>();
    // uom 0.38 stores the cubic foot rounded to 7 digits; the foot is exact.
    let ft3 = c::<length::foot>().powi(3);
    let nm3 = atm * m3 / (r_u * t0);
    let sm3 = atm * m3 / (r_u * t15);
    let scf = 14.696 * psi * ft3 / (r_u * t60f);
    let rows = vec![
        // length
        row("m", "metre", L, c::<length::meter>()).prefixable(),
        row("km", "kilometre", L, c::<length::kilometer>()),
        row("cm", "centimetre", L, c::<length::centimeter>()),
        row("mm", "millimetre", L, c::<length::millimeter>()),
        row("µm", "micrometre", L, c::<length::micrometer>()).aliases(&["um", "μm"]),
        row("in", "inch", L, inch),
        row("ft", "foot", L, c::<length::foot>()),
        row("yd", "yard", L, c::<length::yard>()),
        row("mi", "mile (international)", L, c::<length::mile>()).aliases(&["mile"]),
        // mass
        row("kg", "kilogram", M, c::<mass::kilogram>()),
        row("g", "gram", M, c::<mass::gram>()).prefixable(),
        row("mg", "milligram", M, c::<mass::milligram>()),
        row("t", "tonne", M, c::<mass::ton>()).note("metric ton, 1000 kg"),
        row("lb", "pound (avoirdupois)", M, POUND_KG)
            .aliases(&["lbm"])
            .note("also lbm; exactly 0.45359237 kg"),
        // time
        row("s", "second", T, c::<time::second>()).prefixable(),
        row("ms", "millisecond", T, c::<time::millisecond>()),
        row("min", "minute", T, c::<time::minute>()),
        row("h", "hour", T, c::<time::hour>()),
        row("d", "day", T, c::<time::day>()),
        // temperature
        row("K", "kelvin", TH, c::<tt::kelvin>())
            .note("absolute temperature or temperature difference"),
        row("degC", "degree Celsius", TH, c::<tt::degree_celsius>())
            .aliases(&["°C", "℃"])
            .offset(off::<tt::degree_celsius>(), Affinity::Absolute)
            .note("also °C; absolute temperature, T/K = t/degC + 273.15; for differences use K or degC_diff"),
        row("degF", "degree Fahrenheit", TH, c::<tt::degree_fahrenheit>())
            .aliases(&["°F", "℉"])
            .offset(off::<tt::degree_fahrenheit>(), Affinity::Absolute)
            .note("also °F; absolute temperature, T/K = (t/degF + 459.67)/1.8; for differences use degF_diff"),
        row("degR", "degree Rankine", TH, c::<tt::degree_rankine>())
            .aliases(&["°R"])
            .affinity(Affinity::Absolute)
            .note("also °R; absolute temperature, T/K = T/degR / 1.8"),
        row("degC_diff", "degree Celsius (difference)", TH, c::<dt::degree_celsius>())
            .aliases(&["Δ°C"])
            .affinity(Affinity::Difference)
            .note("also Δ°C; temperature difference, same size as K"),
        row("degF_diff", "degree Fahrenheit (difference)", TH, c::<dt::degree_fahrenheit>())
            .aliases(&["Δ°F"])
            .affinity(Affinity::Difference)
            .note("also Δ°F; temperature difference, 1/1.8 K"),
        // amount of substance
        row("mol", "mole", N, c::<amt::mole>()).prefixable(),
        row("kmol", "kilomole", N, c::<amt::kilomole>()),
        row("Nm3", "normal cubic metre (gas at 0 °C, 101.325 kPa)", N, nm3)
            .note("an amount of substance: the ideal gas in 1 m^3 at 0 °C and 101.325 kPa (DIN 1343), 44.615 mol"),
        row("Sm3", "standard cubic metre (gas at 15 °C, 101.325 kPa)", N, sm3)
            .note("an amount of substance: the ideal gas in 1 m^3 at 15 °C and 101.325 kPa (ISO 13443), 42.293 mol"),
        row("scf", "standard cubic foot (gas at 60 °F, 14.696 psi)", N, scf)
            .note("an amount of substance: the ideal gas in 1 ft^3 at 60 °F and 14.696 psi, 1.1953 mol"),
        // force
        row("N", "newton", F, c::<force::newton>()).prefixable(),
        row("kN", "kilonewton", F, c::<force::kilonewton>()),
        row("lbf", "pound-force", F, lbf).note("0.45359237 kg x 9.80665 m/s^2"),
        row("kgf", "kilogram-force", F, c::<force::kilogram_force>()),
        // pressure
        row("Pa", "pascal", P, c::<pr::pascal>()).prefixable(),
        row("hPa", "hectopascal", P, c::<pr::hectopascal>()),
        row("kPa", "kilopascal", P, c::<pr::kilopascal>()),
        row("MPa", "megapascal", P, c::<pr::megapascal>()),
        row("GPa", "gigapascal", P, c::<pr::gigapascal>()),
        row("bar", "bar", P, c::<pr::bar>()).prefixable(),
        row("mbar", "millibar", P, c::<pr::millibar>()),
        row("atm", "standard atmosphere", P, atm),
        row("psi", "pound-force per square inch", P, psi)
            .aliases(&["psia"])
            .note("also psia (absolute); lbf/in^2"),
        row("mmHg", "millimetre of mercury (conventional)", P, c::<pr::millimeter_of_mercury>()),
        row("inH2O", "inch of water (conventional)", P, c::<pr::inch_of_water>())
            .note("conventional: 0.0254 m x 1000 kg/m^3 x 9.80665 m/s^2"),
        row("inHg", "inch of mercury (conventional)", P, c::<pr::inch_of_mercury>()),
        row("mmH2O", "millimetre of water (conventional)", P, c::<pr::millimeter_of_water>())
            .note("conventional: 0.001 m x 1000 kg/m^3 x 9.80665 m/s^2"),
        row("mH2O", "metre of water (conventional)", P, 1000.0 * c::<pr::millimeter_of_water>())
            .note("conventional: 1 m x 1000 kg/m^3 x 9.80665 m/s^2 = 9.80665 kPa (NIST SP 811 B.8)"),
        row("ftH2O", "foot of water (conventional)", P, c::<pr::foot_of_water>())
            .note("conventional: 0.3048 m x 1000 kg/m^3 x 9.80665 m/s^2 = 2989.067 Pa (NIST SP 811 B.8)"),
        row("torr", "torr", P, c::<pr::torr>()).aliases(&["Torr"]),
        row("barg", "bar, gauge", P, c::<pr::bar>())
            .offset(atm, Affinity::Absolute)
            .note("gauge: absolute = gauge + 101.325 kPa"),
        row("kPag", "kilopascal, gauge", P, c::<pr::kilopascal>())
            .offset(atm, Affinity::Absolute)
            .note("gauge: absolute = gauge + 101.325 kPa"),
        row("MPag", "megapascal, gauge", P, c::<pr::megapascal>())
            .offset(atm, Affinity::Absolute)
            .note("gauge: absolute = gauge + 101.325 kPa"),
        row("psig", "pound-force per square inch, gauge", P, psi)
            .offset(atm, Affinity::Absolute)
            .note("gauge: absolute = gauge + 101.325 kPa (14.696 psi)"),
        // energy
        row("J", "joule", E, c::<energy::joule>()).prefixable(),
        row("kJ", "kilojoule", E, c::<energy::kilojoule>()),
        row("MJ", "megajoule", E, c::<energy::megajoule>()),
        row("Wh", "watt hour", E, c::<energy::watt_hour>()).prefixable(),
        row("kWh", "kilowatt hour", E, c::<energy::kilowatt_hour>()),
        row("MWh", "megawatt hour", E, c::<energy::megawatt_hour>()),
        row("Btu", "British thermal unit (IT)", E, c::<energy::btu_it>())
            .note("International Table Btu"),
        row("cal", "calorie (IT)", E, c::<energy::calorie_it>())
            .note("International Table calorie, 4.1868 J"),
        row("kcal", "kilocalorie (IT)", E, c::<energy::kilocalorie_it>())
            .note("International Table kilocalorie, 4186.8 J"),
        // power
        row("W", "watt", W, c::<power::watt>()).prefixable(),
        row("kW", "kilowatt", W, c::<power::kilowatt>()),
        row("MW", "megawatt", W, c::<power::megawatt>()),
        row("hp", "horsepower (mechanical)", W, c::<power::horsepower>())
            .note("550 ft lbf/s"),
        // volume
        row("L", "litre", V, c::<volume::liter>())
            .note("also l; 0.001 m^3; takes SI prefixes")
            .prefixable()
            .aliases(&["l"]),
        row("mL", "millilitre", V, c::<volume::milliliter>()).aliases(&["ml"]),
        row("gal", "gallon (US liquid)", V, c::<volume::gallon>()),
        // volume flow
        row("gpm", "US gallon per minute", VF, c::<uom::si::volume_rate::gallon_per_minute>())
            .note("US liquid gallon per minute, 3.785412e-3 m^3 / 60 s"),
        // frequency and rotational speed
        row("Hz", "hertz", HZ, c::<frequency::hertz>()).prefixable(),
        row("rpm", "revolution per minute", HZ, c::<frequency::cycle_per_minute>())
            .note("a rotational frequency: 60 rpm = 1 Hz = 1 rev/s; angular speed in rad/s is 2*pi times it"),
        // angle (dimensionless)
        row("rad", "radian", NONE, c::<angle::radian>()),
        row("deg", "degree (angle)", NONE, c::<angle::degree>()).aliases(&["°"]).note("pi/180"),
        // the other two SI base units, so that every base-symbol text
        // (`Dim::base_symbol`) resolves
        row("A", "ampere", Dim([0, 0, 0, 0, 0, 1, 0]), c::<uom::si::electric_current::ampere>())
            .prefixable(),
        row("cd", "candela", Dim([0, 0, 0, 0, 0, 0, 1]), c::<uom::si::luminous_intensity::candela>()),
        // dimensionless ratios
        row("%", "percent", NONE, c::<ratio::percent>()),
        row("ppm", "part per million", NONE, c::<ratio::part_per_million>()),
    ];
    rows.into_iter().map(|b| b.e).collect()
}

/// The table (built once).
pub(crate) fn entries() -> &'static [Entry] {
    static TABLE: OnceLock<Vec<Entry>> = OnceLock::new();
    TABLE.get_or_init(build)
}

/// Symbol and alias -> row (built once; the first row wins, as in a scan
/// of the table).
fn index() -> &'static HashMap<&'static str, &'static Entry> {
    static INDEX: OnceLock<HashMap<&'static str, &'static Entry>> = OnceLock::new();
    INDEX.get_or_init(|| {
        let mut map = HashMap::new();
        for e in entries() {
            for s in std::iter::once(&e.symbol).chain(e.aliases.iter()) {
                map.entry(*s).or_insert(e);
            }
        }
        map
    })
}

/// Find a row by its symbol or an alias (exact, case-sensitive).
pub(crate) fn find(symbol: &str) -> Option<&'static Entry> {
    index().get(symbol).copied()
}

/// The first prefixable row with this symbol or alias.
fn find_prefixable(symbol: &str) -> Option<&'static Entry> {
    match find(symbol) {
        Some(e) if e.prefixable => Some(e),
        Some(_) => entries()
            .iter()
            .find(|e| e.prefixable && (e.symbol == symbol || e.aliases.contains(&symbol))),
        None => None,
    }
}

/// A looked-up symbol: the row, plus the power of ten of a prefix.
pub(crate) fn find_prefixed(symbol: &str) -> Option<(&'static Entry, i32)> {
    if let Some(e) = find(symbol) {
        return Some((e, 0));
    }
    for p in PREFIXES {
        if let Some(rest) = symbol.strip_prefix(p.symbol)
            && !rest.is_empty()
            && let Some(e) = find_prefixable(rest)
        {
            return Some((e, p.exp));
        }
    }
    None
}

/// Spellings offered as suggestions: every symbol and alias, and the
/// prefixed forms an engineer is likely to mean.
pub(crate) fn suggestion_candidates() -> Vec<String> {
    const COMMON: &[&str] = &["k", "M", "G", "m", "µ", "c", "h"];
    let mut out: Vec<String> = Vec::new();
    for e in entries() {
        out.push(e.symbol.to_string());
    }
    for e in entries() {
        for a in e.aliases {
            out.push((*a).to_string());
        }
    }
    for p in COMMON {
        for e in entries().iter().filter(|e| e.prefixable) {
            let s = format!("{p}{}", e.symbol);
            if !out.contains(&s) {
                out.push(s);
            }
        }
    }
    out
}
