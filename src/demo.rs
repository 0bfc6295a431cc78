//! The built-in demo: an invented pilot line that fires ceramic filter discs. Seeded, so the
//! committed `demo-data/filter_discs.csv` can be re-created byte for byte with `forebear demo
//! --regenerate`, and [`write_demo_data`] places it for `forebear demo` without overwriting another
//! file. The true graph and mechanisms are in `demo-data/README.md`.
//!
//! ```text
//! binder_fraction ──▶ pore_density ──▶ crush_strength ◀── kiln_peak_temp
//!                                          │
//!                                          ▼
//!                  probe_gap ──────▶ echo_amplitude
//! ambient_humidity ──▶ slurry_moisture        conveyor_speed (unrelated)
//! ```

use crate::error::{Error, Result};
use crate::output::{fs_error, rename_file_noreplace, sync_dir, write_synced};
use crate::rng::{standard_normal, unit_interval, Key};
use std::path::{Path, PathBuf};

/// Rows in the demo data set.
pub const DEMO_ROWS: usize = 1500;
/// The demo's seed.
pub const DEMO_SEED: u64 = 20261201;
/// The committed demo data, embedded so that `forebear demo` writes the same bytes everywhere.
pub const DEMO_CSV: &str = include_str!("../demo-data/filter_discs.csv");
/// The demo's file name.
pub const DEMO_FILE: &str = "filter_discs.csv";
/// Targets analysed by `forebear demo`: one with a v-structure, one with a single parent.
pub const DEMO_TARGETS: [&str; 2] = ["crush_strength", "pore_density"];
/// Column names in file order.
pub const DEMO_COLUMNS: [&str; 9] = [
    "kiln_peak_temp",
    "binder_fraction",
    "pore_density",
    "crush_strength",
    "probe_gap",
    "echo_amplitude",
    "ambient_humidity",
    "slurry_moisture",
    "conveyor_speed",
];

/// Generates the demo CSV text from its seed.
pub fn generate_demo_csv() -> String {
    generate_demo_csv_seeded(DEMO_SEED)
}

/// The demo scenario drawn with another seed: the same columns and mechanisms, other rows (for
/// plans of several studies in tests and examples).
pub fn generate_demo_csv_seeded(seed: u64) -> String {
    let key = Key::new("demo-data", seed).finish();
    let mut out = DEMO_COLUMNS.join(",");
    out.push('\n');
    for row in 0..DEMO_ROWS {
        let mut rng = key.stream(row as u64);
        let mut u = || unit_interval(&mut rng);
        let kiln = 1180.0 + 80.0 * u();
        let binder = 2.0 + 4.0 * u();
        let gap = 0.4 + 0.8 * u();
        let humidity = 30.0 + 40.0 * u();
        let speed = 4.0 + 2.0 * u();
        let (e1, e2, e3, e4, laplace) = (u(), u(), u(), u(), u());
        let normal = |a: f64, b: f64| {
            // Box–Muller on two of this row's uniforms.
            (-2.0 * a.max(1e-300).ln()).sqrt() * (std::f64::consts::TAU * b).cos()
        };
        let pore = (8.0 + 6.0 * (binder - 1.5).sqrt()) * (0.12 * normal(e1, e2)).exp();
        let firing = 34.0 + 16.0 * ((kiln - 1220.0) / 18.0).tanh();
        let strength = firing * (1.9 - 0.06 * pore) * (0.10 * normal(e3, e4)).exp();
        let laplace_noise = if laplace < 0.5 {
            (2.0 * laplace).ln()
        } else {
            -(2.0 * (1.0 - laplace)).ln()
        };
        let echo = 2.2 * strength.sqrt() / (0.3 + gap) + 0.25 * laplace_noise;
        let moisture = 18.0 + 0.08 * humidity + 0.5 * standard_normal(&mut rng);
        // A few humidity readings are missing (sensor dropouts), to show how rows are dropped.
        let humidity_text = if row % 250 == 17 {
            "NA".to_string()
        } else {
            format!("{humidity:.1}")
        };
        out.push_str(&format!(
            "{kiln:.1},{binder:.3},{pore:.2},{strength:.2},{gap:.3},{echo:.3},{humidity_text},{moisture:.2},{speed:.2}\n"
        ));
    }
    out
}

/// Writes the demo CSV into `folder` (created if needed) unless it is already there, and returns
/// its path. A different file of that name (the user's, or edited) is never overwritten, even with
/// `--force`. The file is written beside its place and renamed without replacing, so it appears
/// whole or not at all.
pub fn write_demo_data(folder: &Path) -> Result<PathBuf> {
    std::fs::create_dir_all(folder).map_err(|e| fs_error("create the folder", folder, &e))?;
    let path = folder.join(DEMO_FILE);
    place_demo_file(&path)?;
    Ok(path)
}

/// Writes the demo CSV to `path` as [`write_demo_data`] describes.
fn place_demo_file(path: &Path) -> Result<()> {
    let same = |path: &Path| std::fs::read(path).is_ok_and(|bytes| bytes == DEMO_CSV.as_bytes());
    let refuse = || {
        Err(Error::input(format!(
            "'{}' exists and is not the demo data; forebear does not overwrite it: move it away, \
             or choose another --out",
            path.display()
        )))
    };
    if std::fs::symlink_metadata(path).is_ok() {
        return if same(path) { Ok(()) } else { refuse() };
    }
    let staged = path.with_file_name(format!(".{DEMO_FILE}.partial-{}", std::process::id()));
    write_synced(&staged, DEMO_CSV.as_bytes()).map_err(|e| fs_error("write", &staged, &e))?;
    let placed = rename_file_noreplace(&staged, path);
    let _ = std::fs::remove_file(&staged);
    match placed {
        Ok(()) => {
            let folder = path.parent().unwrap_or(Path::new("."));
            sync_dir(folder).map_err(|e| fs_error("write in", folder, &e))
        }
        // Another demo run placed it first.
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists && same(path) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => refuse(),
        Err(e) => Err(fs_error("write", path, &e)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn committed_demo_data_is_what_the_seeded_generator_writes() {
        assert_eq!(
            generate_demo_csv(),
            DEMO_CSV,
            "run `forebear demo --regenerate` and commit"
        );
    }
}
