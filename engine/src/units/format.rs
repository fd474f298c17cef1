//! Significant-figure number formatting.

pub use crate::thermo::text::{format_sig, shortest_text};
