//! Typed (uom) facade over the property models. (to be written)
