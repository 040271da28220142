//! thetaseek: polymer solution thermodynamics from dilute-solution series.
//!
//! The pipeline, one module per stage:
//! [`input`] reads CSV bytes (polars) and converts every value to SI ([`units`]) →
//! [`dataset`] groups readings into series and temperatures →
//! [`virial`] fits Mn and A2 at each temperature ([`regression`] does the least squares) →
//! [`analysis`] runs that for every series in parallel →
//! [`report`] turns results into the JSON report, the CSV table and the terminal table, and
//! [`plot`] draws the figures from the report.
//! File I/O lives only in the binary's `commands` and in [`output`].

#![deny(clippy::float_cmp)]
#![warn(missing_docs)]

pub mod analysis;
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
