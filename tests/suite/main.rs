//! Every integration test in one binary (one link instead of one per file): each module
//! checks one part of the tool against its outside reference or its promise; `common` holds the
//! helpers they share.

mod common;

mod bad_input;
mod campaign;
mod cli;
mod figures;
mod fuzz;
mod hardening;
mod html;
mod lab_data;
mod light_scattering;
mod next;
mod nist_nonlinear;
mod nist_norris;
mod numpy_fits;
mod outputs;
mod plan;
mod properties;
mod recovery;
mod regression;
mod routes;
mod theta;
mod unit_invariance;
mod units;
mod viscometry;
