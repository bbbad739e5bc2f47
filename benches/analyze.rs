//! Speed of `sagline analyze` on an invented basin of 1,000 forward-modelled wells of
//! 60 surfaces (60,000 tops rows), each with a rift: the analysis runs the phase
//! search, the uniform and two-layer fits and 200 Monte-Carlo draws per well.
//!
//! - `sagline analyze` end to end: the release binary started as a process, reading
//!   the tops file and writing the JSON report to a file. Target: under 5 s on a
//!   2-core machine.
//! - `analysis::analyse_wells` alone, on the same wells read from the same file: the
//!   part of the end-to-end time that is the science.
//! - Peak memory of `sagline analyze` (with fits, and `--backstrip-only`), measured once
//!   from the process's high-water mark (`VmHWM`, Linux). Target: under 100 MB, since the
//!   report is streamed a chunk of wells at a time.
//!
//! Few samples, since one run takes seconds.

mod common;

use common::{SURFACES_PER_WELL, WELLS, invented_basin_tops};
use criterion::{Criterion, SamplingMode, Throughput, criterion_group, criterion_main};
use sagline_science::analysis::{self, StudyInputs};
use sagline_science::input::{self, TopsOptions};
use sagline_science::lithology::Catalogue;
use sagline_science::{ModelParameters, SeaLevelCurve};
use std::path::Path;
use std::process::Command;
use std::time::Duration;

/// Run the binary once on `tops`, writing the JSON report to `out`, with `extra` options.
fn run_analyze_with(tops: &Path, out: &Path, extra: &[&str]) {
    let result = Command::new(env!("CARGO_BIN_EXE_sagline"))
        .arg("analyze")
        .arg(tops)
        .arg("--out")
        .arg(out)
        .args(extra)
        .output()
        .expect("start the sagline binary");
    assert!(
        result.status.success(),
        "sagline analyze failed: {}",
        String::from_utf8_lossy(&result.stderr)
    );
}

/// Peak memory target of one run (MiB).
const PEAK_MEMORY_TARGET_MIB: f64 = 100.0;

/// Run the binary once as [`run_analyze_with`] does and return its peak resident memory
/// in MiB: the `VmHWM` line of /proc/PID/status, read every few milliseconds while the
/// process runs (the high-water mark only grows, so the last reading is the peak but for
/// the last few milliseconds). `None` where /proc is not available.
fn peak_memory_mib(tops: &Path, out: &Path, extra: &[&str]) -> Option<f64> {
    let mut child = Command::new(env!("CARGO_BIN_EXE_sagline"))
        .arg("analyze")
        .arg(tops)
        .arg("--out")
        .arg(out)
        .args(extra)
        .stderr(std::process::Stdio::null())
        .spawn()
        .expect("start the sagline binary");
    let status_file = format!("/proc/{}/status", child.id());
    let mut peak_kib: Option<u64> = None;
    loop {
        if let Ok(status) = std::fs::read_to_string(&status_file) {
            let hwm = status
                .lines()
                .find_map(|l| l.strip_prefix("VmHWM:"))
                .and_then(|v| v.trim().trim_end_matches("kB").trim().parse::<u64>().ok());
            if let Some(kib) = hwm {
                peak_kib = Some(peak_kib.map_or(kib, |p| p.max(kib)));
            }
        }
        if let Some(status) = child.try_wait().expect("wait for sagline") {
            assert!(status.success(), "sagline analyze failed");
            break;
        }
        std::thread::sleep(Duration::from_millis(2));
    }
    peak_kib.map(|kib| kib as f64 / 1024.0)
}

/// The whole analysis: backstripping, phase search, fits and their ranges.
fn run_analyze(tops: &Path, out: &Path) {
    run_analyze_with(tops, out, &[]);
}

fn analyze(c: &mut Criterion) {
    let dir = tempfile::tempdir().expect("temporary directory");
    let tops_path = dir.path().join("tarrow_tops.csv");
    let out_path = dir.path().join("tarrow_results.json");
    let tops = invented_basin_tops(WELLS);
    std::fs::write(&tops_path, &tops).expect("write the tops file");

    // Once before timing: every well is analysed and fitted.
    run_analyze(&tops_path, &out_path);
    let report: serde_json::Value =
        serde_json::from_slice(&std::fs::read(&out_path).expect("the report file"))
            .expect("the report is JSON");
    let wells = report["wells"].as_array().expect("wells array");
    assert_eq!(wells.len(), WELLS);
    let fitted = wells.iter().filter(|w| w["stretching"].is_object()).count();
    eprintln!("analyze: {fitted} of {WELLS} wells have a stretching fit");

    for (what, extra) in [
        ("with fits", &[][..]),
        ("--backstrip-only", &["--backstrip-only"][..]),
    ] {
        match peak_memory_mib(&tops_path, &out_path, extra) {
            Some(mib) => {
                eprintln!(
                    "analyze {what}: peak memory {mib:.0} MiB (target under {PEAK_MEMORY_TARGET_MIB} MiB)"
                );
                assert!(
                    mib < PEAK_MEMORY_TARGET_MIB,
                    "analyze {what}: peak memory {mib:.0} MiB"
                );
            }
            None => eprintln!("analyze {what}: peak memory not measured (no /proc)"),
        }
    }

    let mut group = c.benchmark_group("analyze");
    group
        .sample_size(10)
        .sampling_mode(SamplingMode::Flat)
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(40))
        .throughput(Throughput::Elements(WELLS as u64));
    group.bench_function(
        "sagline analyze, 1,000 wells x 60 surfaces, JSON to a file",
        |b| b.iter(|| run_analyze(&tops_path, &out_path)),
    );
    group.bench_function(
        "sagline analyze --backstrip-only, 1,000 wells x 60 surfaces, JSON to a file",
        |b| b.iter(|| run_analyze_with(&tops_path, &out_path, &["--backstrip-only"])),
    );

    // The same wells, read as the command reads them, analysed in-process.
    let catalogue = Catalogue::published_defaults();
    let names: Vec<String> = catalogue
        .lithologies()
        .iter()
        .map(|l| l.name.clone())
        .collect();
    let spelling = |n: &str| names.iter().find(|c| c.eq_ignore_ascii_case(n)).cloned();
    let parsed =
        input::parse_tops_with_catalogue(tops.as_bytes(), &TopsOptions::default(), &spelling)
            .expect("the invented tops file is valid");
    assert_eq!(parsed.rows, WELLS * SURFACES_PER_WELL);
    let inputs = StudyInputs {
        params: ModelParameters::default(),
        catalogue: catalogue.clone(),
        sea_level: SeaLevelCurve::default(),
        thermal: sagline_science::analysis::thermal::ThermalInputs::default(),
    };
    group.bench_function("analysis::analyse_wells, 1,000 wells x 60 surfaces", |b| {
        b.iter(|| {
            let results = analysis::analyse_wells(&parsed.wells, &inputs, &|_| None, &|| {});
            assert!(results.iter().all(Result::is_ok));
            results
        })
    });
    group.finish();
}

criterion_group!(benches, analyze);
criterion_main!(benches);
