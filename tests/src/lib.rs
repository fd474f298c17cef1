//! End-to-end tests live in `tests/`; reference data in `reference/`.
