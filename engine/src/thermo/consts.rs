//! Physical constants shared by the models and the worksheet language.

/// Universal gas constant, J/(mol K) — CODATA 2018 (exact since the 2019 SI).
pub const R_U: f64 = 8.314_462_618;
/// Standard acceleration of gravity, m/s^2 (3rd CGPM 1901; NIST SP 811).
pub const G_N: f64 = 9.806_65;
/// Standard atmosphere, Pa (10th CGPM 1954; NIST SP 811).
pub const P_ATM: f64 = 101_325.0;
