//! The reader on a large file: writes an invented table of ROWS × COLS numbers (if asked), reads
//! and validates it the way `analyze` does, and prints the peak resident memory against the size
//! of the numbers. Used for the memory figure in docs/benchmarks.md:
//!
//! ```text
//! cargo run --release --example read_large -- --write target/bench-data/wide.csv 1000000 50
//! /usr/bin/time -v target/release/examples/read_large target/bench-data/wide.csv
//! ```
//!
//! The numbers are a deterministic xorshift stream (Marsaglia 2003) written with 6 decimals; the
//! target `c0` depends on `c1` and `c2`, so that no column is constant or a copy of another.

use forebear::analysis::{prepare, Silent};
use forebear::settings::SettingsInput;
use std::io::{BufWriter, Write};
use std::path::Path;
use std::time::Instant;

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    match args.as_slice() {
        [flag, path, rows, cols] if flag == "--write" => {
            let rows: usize = rows.parse().expect("ROWS is a whole number");
            let cols: usize = cols.parse().expect("COLS is a whole number");
            write_table(Path::new(path), rows, cols).expect("the file can be written");
        }
        [path] => read(Path::new(path)),
        _ => {
            eprintln!("usage: read_large --write PATH ROWS COLS | read_large PATH");
            std::process::exit(2);
        }
    }
}

fn write_table(path: &Path, rows: usize, cols: usize) -> std::io::Result<()> {
    if let Some(dir) = path.parent() {
        std::fs::create_dir_all(dir)?;
    }
    let mut out = BufWriter::with_capacity(1 << 20, std::fs::File::create(path)?);
    let names: Vec<String> = (0..cols).map(|j| format!("c{j}")).collect();
    writeln!(out, "{}", names.join(","))?;
    let mut state: u64 = 0x9e37_79b9_7f4a_7c15;
    let mut next = move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        (state >> 11) as f64 / (1u64 << 53) as f64
    };
    let mut row = vec![0.0; cols];
    for _ in 0..rows {
        for value in row.iter_mut().skip(1) {
            *value = next();
        }
        row[0] = row[1] + row[2] * row[2] + 0.1 * next();
        for (j, value) in row.iter().enumerate() {
            if j > 0 {
                out.write_all(b",")?;
            }
            write!(out, "{value:.6}")?;
        }
        out.write_all(b"\n")?;
    }
    out.flush()
}

fn read(path: &Path) {
    let started = Instant::now();
    let settings = SettingsInput {
        replicates: Some(0),
        ..SettingsInput::for_target("c0")
    }
    .check()
    .expect("valid settings");
    let prepared = match prepare(path, &settings, "c0", &Silent) {
        Ok(p) => p,
        Err(e) => {
            eprintln!("read_large: {e}");
            std::process::exit(2);
        }
    };
    let (rows, cols) = (prepared.table.n_rows(), prepared.table.n_cols());
    let numbers = (rows * cols * std::mem::size_of::<f64>()) as f64 / (1 << 20) as f64;
    let peak = peak_rss_mib();
    println!(
        "read {rows} rows × {cols} columns in {:.1} s; numbers {numbers:.0} MiB; peak RSS {} \
         (ratio {})",
        started.elapsed().as_secs_f64(),
        peak.map_or("unknown".into(), |p| format!("{p:.0} MiB")),
        peak.map_or("unknown".into(), |p| format!("{:.2}", p / numbers)),
    );
}

/// VmHWM of this process from /proc (Linux), in MiB.
fn peak_rss_mib() -> Option<f64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib / 1024.0)
}
