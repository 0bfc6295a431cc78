//! The integration tests of forebear, as one test program: one module per area (each file beside
//! this one), and the helpers they share in `common`. One program links once and runs every test
//! in one process, so no test may rely on process-wide state (the current folder, environment
//! variables, a global thread pool) or on a temporary folder name another module could also pick:
//! scratch folders come from `common::fresh_dir`, unique within the process.
//!
//! Run one area with a filter on its module path, e.g.
//! `cargo test --release --test integration batch::`.

mod common;

mod atomic_write;
mod bad_input;
mod batch;
mod canonical_json;
mod cli_input;
mod coefficient_reference;
mod conventions;
mod dependence_pvalue;
mod determinism;
mod document_control;
mod dossier;
mod error_control;
mod formats;
mod knowledge;
mod method_version;
mod names;
mod neighbors_exact;
mod neighbourhood;
mod qualify;
mod read_once;
mod reader_limits;
mod reader_messages;
mod reader_never_panics;
mod reader_options;
mod reference_structures;
mod resampling;
mod schedulers;
mod schemas;
mod search_simulated;
mod signing;
mod stdin;
mod structure;
mod targets;
mod trail;
mod verify;
mod xi_scipy;
