//! thetaseek: polymer solution thermodynamics from dilute-solution series.
//!
//! The pipeline, one stage per module, each using only the stages above it:
//!
//! 1. [`input`] reads CSV files and workbooks (polars, calamine) and converts every value to SI
//!    ([`units`]) → [`dataset::Dataset`], every series of every route.
//! 2. [`virial`] fits Mn and A2 at each temperature, [`scattering`] the Zimm fits →
//!    [`virial::TemperatureFit`].
//! 3. [`theta`] fits the across-temperature models, finds θ with its interval
//!    ([`uncertainty`]), the Flory parameters ([`thermo`]) and compares the routes;
//!    [`analysis`] runs it all for every series in parallel → [`analysis::SeriesResult`].
//! 4. [`plan`], [`design`] and [`safety`] advise on solvents, temperatures and next runs.
//! 5. [`report`] turns results into report units (JSON both ways, CSV tables, terminal text) →
//!    [`report::Report`]; [`plot`] draws figures from it and [`html`] puts both in one page.
//!
//! Below every stage: [`numerics`] (least squares, the root finder, AICc), [`dataset`]'s
//! types, [`units`], [`error`], [`progress`]. File I/O lives only in the binary's `commands`
//! and in [`output`].

#![deny(clippy::float_cmp)]
#![warn(missing_docs)]

pub mod analysis;
pub mod chain_dimensions;
pub mod dataset;
pub mod design;
pub mod error;
pub mod html;
pub mod input;
pub mod json_numbers;
pub mod numerics;
pub mod output;
pub mod plan;
pub mod plot;
pub mod progress;
pub mod report;
pub mod safety;
pub mod scattering;
pub mod simulate;
pub mod solvent;
pub mod thermo;
pub mod theta;
pub mod uncertainty;
pub mod units;
pub mod virial;
pub mod viscometry;
