//! forebear: nonparametric local causal search with a dossier a reviewer can re-run.
//!
//! Data flow (DESIGN.md): `data` reads and validates a CSV; `settings` checks settings once and
//! `study` checks them against the data's header; `search`
//! runs forward selection and parent recovery on the coefficients of `measure`; the result is one
//! `finding::Finding`, rendered by `report` and digested by `manifest`.

pub mod analysis;
pub mod batch;
pub mod cli;
pub mod data;
pub mod demo;
pub mod dependence;
pub mod digest;
pub mod dossier;
pub mod error;
pub mod finding;
pub mod manifest;
pub mod measure;
pub mod output;
pub mod qualify;
pub mod report;
pub mod reproduce;
pub mod resample;
pub mod rng;
pub mod schemas;
pub mod search;
pub mod settings;
pub mod sign;
pub mod study;
pub mod targets;
pub mod text;
pub mod timefmt;
pub mod trail;
pub mod verify;
