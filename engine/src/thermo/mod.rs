//! Thermodynamic property models and second-law functions.
//!
//! The core works on plain `f64` in coherent SI units (K, Pa, J/kg,
//! J/(kg K), m^3/kg) so that the worksheet evaluator can call it without any
//! unit work; [`typed`] offers the same models with `uom` quantities at the
//! surface for Rust callers.
//!
//! Models:
//! - [`ideal_gas`]: ideal gases with temperature-dependent cp from NASA
//!   7-coefficient polynomials, and standard dry air;
//! - [`perfect_gas`]: constant cp;
//! - [`incompressible`]: liquids and solids with constant c and density;
//! - [`if97`]: water and steam by IAPWS-IF97;
//! - [`helmholtz`]: refrigerants and CO2 by their reference Helmholtz-energy
//!   equations of state.
//!
//! [`process`] holds the device models (isentropic, compressor, turbine,
//! pump, nozzle, throttle) and [`exergy`] the entropy and exergy functions.

pub mod consts;
pub mod exergy;
pub mod fluid;
pub mod helmholtz;
pub mod ideal_gas;
pub mod if97;
pub mod incompressible;
pub mod perfect_gas;
pub mod polytropic;
pub mod process;
pub(crate) mod text;
pub mod typed;

use std::fmt;

/// A property pair fixing a state. All values SI: T in K, p in Pa, h in
/// J/kg, s in J/(kg K), x dimensionless (0..=1).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Spec {
    TP {
        t: f64,
        p: f64,
    },
    PH {
        p: f64,
        h: f64,
    },
    PS {
        p: f64,
        s: f64,
    },
    PX {
        p: f64,
        x: f64,
    },
    TX {
        t: f64,
        x: f64,
    },
    TH {
        t: f64,
        h: f64,
    },
    HS {
        h: f64,
        s: f64,
    },
    TS {
        t: f64,
        s: f64,
    },
    /// Temperature and specific volume (m^3/kg), e.g. a closed rigid vessel.
    TV {
        t: f64,
        v: f64,
    },
}

/// Which property a field access asks for.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Field {
    T,
    P,
    H,
    U,
    S,
    V,
    Rho,
    Cp,
    Cv,
    K,
    X,
    /// Speed of sound.
    W,
    /// Molar mass (a field of the substance, not of a state).
    M,
    /// Specific gas constant (a field of a gas, not of a state).
    R,
}

impl Field {
    pub const ALL: [Field; 12] = [
        Field::T,
        Field::P,
        Field::H,
        Field::U,
        Field::S,
        Field::V,
        Field::Rho,
        Field::Cp,
        Field::Cv,
        Field::K,
        Field::X,
        Field::W,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Field::T => "T",
            Field::P => "p",
            Field::H => "h",
            Field::U => "u",
            Field::S => "s",
            Field::V => "v",
            Field::Rho => "rho",
            Field::Cp => "cp",
            Field::Cv => "cv",
            Field::K => "k",
            Field::X => "x",
            Field::W => "w",
            Field::M => "M",
            Field::R => "R",
        }
    }

    /// Fields of substances (`gas.M`, `liquid.rho`).
    pub const SUBSTANCE: [Field; 7] = [
        Field::M,
        Field::R,
        Field::Cp,
        Field::Cv,
        Field::K,
        Field::Rho,
        Field::V,
    ];

    pub fn from_name(name: &str) -> Option<Field> {
        Field::ALL
            .into_iter()
            .chain([Field::M, Field::R])
            .find(|f| f.name() == name)
    }
}

/// A fully evaluated state, all SI. Fields a model cannot supply for this
/// state (quality of a single-phase state, cp of a two-phase mixture) are
/// `None`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct State {
    /// Temperature, K.
    pub t: f64,
    /// Pressure (absolute), Pa.
    pub p: f64,
    /// Specific enthalpy, J/kg.
    pub h: f64,
    /// Specific internal energy, J/kg.
    pub u: f64,
    /// Specific entropy, J/(kg K).
    pub s: f64,
    /// Specific volume, m^3/kg.
    pub v: f64,
    /// Isobaric specific heat, J/(kg K).
    pub cp: Option<f64>,
    /// Isochoric specific heat, J/(kg K).
    pub cv: Option<f64>,
    /// Vapour quality (mass fraction of vapour), for two-phase states.
    pub x: Option<f64>,
    /// Speed of sound, m/s, for single-phase states of models that give it.
    pub w: Option<f64>,
}

impl State {
    /// The value of a field, or `None` if this state has no such value.
    pub fn get(&self, field: Field) -> Option<f64> {
        match field {
            Field::T => Some(self.t),
            Field::P => Some(self.p),
            Field::H => Some(self.h),
            Field::U => Some(self.u),
            Field::S => Some(self.s),
            Field::V => Some(self.v),
            Field::Rho => Some(1.0 / self.v),
            Field::Cp => self.cp,
            Field::Cv => self.cv,
            Field::K => match (self.cp, self.cv) {
                (Some(cp), Some(cv)) if cv != 0.0 => Some(cp / cv),
                _ => None,
            },
            Field::X => self.x,
            Field::W => self.w,
            Field::M | Field::R => None,
        }
    }
}

/// The kind of property model, known at check time (the checker uses it to
/// reject fields and property pairs a model cannot supply).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ModelKind {
    IdealGas,
    PerfectGas,
    Incompressible,
    /// A fluid by its equation of state (water by IAPWS-IF97, refrigerants).
    RealFluid,
}

impl ModelKind {
    pub fn describe(self) -> &'static str {
        match self {
            ModelKind::IdealGas => "ideal gas",
            ModelKind::PerfectGas => "perfect gas",
            ModelKind::Incompressible => "incompressible substance",
            ModelKind::RealFluid => "real fluid",
        }
    }

    /// Whether states of this model can have the field at all.
    pub fn has_field(self, field: Field) -> bool {
        !matches!(field, Field::M | Field::R)
            && !matches!(
                (self, field),
                (
                    ModelKind::IdealGas | ModelKind::PerfectGas | ModelKind::Incompressible,
                    Field::X
                ) | (ModelKind::Incompressible, Field::W)
            )
    }

    /// Whether this model accepts the property pair (by spec kind).
    pub fn accepts(self, spec: SpecKind) -> bool {
        match self {
            ModelKind::RealFluid => true,
            _ => matches!(spec, SpecKind::TP | SpecKind::PH | SpecKind::PS),
        }
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum SpecKind {
    TP,
    PH,
    PS,
    PX,
    TX,
    TH,
    HS,
    TS,
    TV,
}

impl Spec {
    pub fn kind(&self) -> SpecKind {
        match self {
            Spec::TP { .. } => SpecKind::TP,
            Spec::PH { .. } => SpecKind::PH,
            Spec::PS { .. } => SpecKind::PS,
            Spec::PX { .. } => SpecKind::PX,
            Spec::TX { .. } => SpecKind::TX,
            Spec::TH { .. } => SpecKind::TH,
            Spec::HS { .. } => SpecKind::HS,
            Spec::TS { .. } => SpecKind::TS,
            Spec::TV { .. } => SpecKind::TV,
        }
    }
}

/// Error from a property model or process function. Messages are complete
/// sentences fragments in words, naming the valid range where there is one.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ThermoError {
    /// An input outside the model's validity, e.g.
    /// "T = 7000 K is outside the range of ideal gas N2 (200 K to 6000 K)".
    #[error("{what} is outside the range of {model} ({range})")]
    OutOfRange {
        what: String,
        model: String,
        range: String,
    },
    /// A bad argument in general words.
    #[error("{0}")]
    InvalidArgument(String),
    /// A bad value of one named parameter: "`eta` must be in (0, 1], got
    /// 1.3" (the caller can point at that argument).
    #[error("`{name}` {message}")]
    Parameter { name: &'static str, message: String },
    /// The model cannot do this, e.g. quality for an ideal gas.
    #[error("{0}")]
    Unsupported(String),
    /// A device outlet beyond the model's range, in words: "the nozzle
    /// outlet would be at about 180 K, below the 200 K limit of the data of
    /// ideal gas air".
    #[error("{0}")]
    OutletOutOfRange(String),
    /// An iteration failed to converge.
    #[error("{0}")]
    NoConvergence(String),
}

pub type Result<T> = std::result::Result<T, ThermoError>;

/// `t` if it is a finite absolute temperature above 0 K, else an
/// out-of-range error naming the model and what gave `t`.
pub(crate) fn positive_t(
    t: f64,
    model: impl FnOnce() -> String,
    what: impl FnOnce() -> String,
) -> Result<f64> {
    if t.is_finite() && t > 0.0 {
        Ok(t)
    } else {
        Err(ThermoError::OutOfRange {
            what: what(),
            model: model(),
            range: "T > 0 K".to_string(),
        })
    }
}

/// A substance value of the worksheet language.
#[derive(Clone, Debug, PartialEq)]
pub enum Substance {
    IdealGas(ideal_gas::IdealGas),
    PerfectGas(perfect_gas::PerfectGas),
    Incompressible(incompressible::Incompressible),
    /// A real fluid from the registry ([`fluid::FLUIDS`]).
    Fluid(fluid::FluidRef),
}

impl Substance {
    /// Water and steam by IAPWS-IF97.
    pub fn water() -> Substance {
        Substance::Fluid(fluid::FluidRef(&if97::Water))
    }

    pub fn kind(&self) -> ModelKind {
        match self {
            Substance::IdealGas(_) => ModelKind::IdealGas,
            Substance::PerfectGas(_) => ModelKind::PerfectGas,
            Substance::Incompressible(_) => ModelKind::Incompressible,
            Substance::Fluid(_) => ModelKind::RealFluid,
        }
    }

    /// Fix a state from a property pair.
    pub fn state(&self, spec: Spec) -> Result<State> {
        match self {
            Substance::IdealGas(g) => g.state(spec),
            Substance::PerfectGas(g) => g.state(spec),
            Substance::Incompressible(m) => m.state(spec),
            Substance::Fluid(f) => f.state(spec),
        }
    }

    /// Molar mass, kg/mol, where the model knows it.
    pub fn molar_mass(&self) -> Option<f64> {
        match self {
            Substance::IdealGas(g) => Some(g.molar_mass()),
            Substance::PerfectGas(g) => Some(consts::R_U / g.r),
            Substance::Incompressible(_) => None,
            Substance::Fluid(f) => Some(f.molar_mass()),
        }
    }

    /// Specific gas constant, J/(kg K), for gas models.
    pub fn gas_constant(&self) -> Option<f64> {
        match self {
            Substance::IdealGas(g) => Some(g.r()),
            Substance::PerfectGas(g) => Some(g.r),
            _ => None,
        }
    }

    /// Warnings about using this model at this state (e.g. ideal gas at a
    /// pressure where real-gas departure may matter). Common-practice rules.
    pub fn state_warning(&self, st: &State) -> Option<String> {
        match self {
            Substance::IdealGas(g) => g.state_warning(st),
            _ => None,
        }
    }

    /// Warnings about a process from `a` to `b` under this model (e.g. a
    /// perfect gas over a temperature span where constant cp is doubtful).
    pub fn process_warning(&self, a: &State, b: &State) -> Option<String> {
        match self {
            Substance::PerfectGas(g) => g.process_warning(a, b),
            _ => None,
        }
    }
}

impl fmt::Display for Substance {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Substance::IdealGas(g) => write!(f, "ideal gas {}", g.name()),
            Substance::PerfectGas(_) => write!(f, "perfect gas (constant cp)"),
            Substance::Incompressible(_) => write!(f, "incompressible substance"),
            Substance::Fluid(fl) => f.write_str(fl.describe()),
        }
    }
}
