//! Checks of the solver against published theory (Theodorsen, Garrick, Wagner, Kármán-Trefftz,
//! Kelvin) and against behaviour that published tandem-foil studies agree on.
//!
//! Run in the release profile (`cargo test --release --test validation`, which `cargo xtask test`
//! does): the unsteady checks would take far too long in a debug build, so a debug build compiles
//! them out. Every reference figure lives in `reference.rs` with its source.

#![cfg(not(debug_assertions))]

mod common;
mod reference;
mod steady;
mod tandem;
mod unsteady;
