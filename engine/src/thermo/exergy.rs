//! Entropy change and exergy functions. (to be written)
