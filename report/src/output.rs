//! `glaze post` as a whole: open, read the series, build the report, and
//! write `report.json` and the CSV tables into an output folder, each file
//! written under a `.partial` name and renamed when whole (`report.json`
//! last, so a folder with it holds a finished report).

use crate::report::{build_report, Report};
use crate::results_file::ResultsFile;
use crate::series::{read_series, Series};
use crate::ReportError;
use glaze_engine::input::post::load_post;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// Options of `glaze post`.
#[derive(Debug, Clone)]
pub struct PostOptions {
    /// Output folder (default: `<results stem>_post` beside the file).
    pub out_dir: Option<PathBuf>,
    /// Report on a file not marked complete.
    pub allow_incomplete: bool,
    /// Write `RESULT.xdmf` (and its `RESULT.xdmf.h5`) beside the results
    /// file for a viewer; skipped for an incomplete file.
    pub xdmf: bool,
}

/// What `glaze post` produced.
#[derive(Debug, Clone)]
pub struct PostOutcome {
    /// The report.
    pub report: Report,
    /// Files written, `report.json` last.
    pub written: Vec<PathBuf>,
    /// Segments of all wires in the clearance search, and segment pairs tested per record on average.
    pub clearance_work: (usize, f64),
    /// Wall time of the clearance search per record, s (summed over threads).
    pub clearance_seconds_per_record: f64,
}

fn write_atomic(path: &Path, text: &str) -> Result<(), ReportError> {
    let partial = PathBuf::from(format!("{}.partial", path.display()));
    let fail = |e: std::io::Error| {
        let _ = std::fs::remove_file(&partial);
        ReportError::Output { path: path.to_path_buf(), message: e.to_string() }
    };
    std::fs::write(&partial, text).map_err(fail)?;
    std::fs::rename(&partial, path).map_err(fail)
}

fn clearance_csv(series: &Series, model: &crate::results_file::ModelInfo) -> String {
    let mut s = String::from("time_s");
    for ((i, j), _) in &series.pairs {
        let _ = write!(s, ",{}-{}_m", model.phase_name(Some(*i)), model.phase_name(Some(*j)));
    }
    for (p, _) in &series.ground {
        let _ = write!(s, ",{}-ground_m", model.phase_name(Some(*p)));
    }
    s.push('\n');
    for (r, t) in series.time.iter().enumerate() {
        let _ = write!(s, "{t}");
        for (_, a) in &series.pairs {
            let _ = write!(s, ",{}", a[r].distance);
        }
        for (_, a) in &series.ground {
            let _ = write!(s, ",{}", a[r].distance);
        }
        s.push('\n');
    }
    s
}

fn envelope_csv(report: &Report) -> String {
    let mut s = String::from("span,phase,station_m,vertical_peak_to_peak_m,horizontal_peak_to_peak_m\n");
    for e in &report.spans {
        for st in &e.stations {
            let _ = writeln!(s, "{},{},{},{},{}", e.span, e.phase, st[0], st[1], st[2]);
        }
    }
    s
}

fn loads_csv(report: &Report) -> String {
    let mut s = String::from(
        "support,static_x_n,static_y_n,static_z_n,max_x_n,max_y_n,max_z_n,min_x_n,min_y_n,min_z_n,peak_magnitude_n,dynamic_ratio\n",
    );
    for l in &report.supports {
        let _ = writeln!(
            s,
            "{},{},{},{},{},{},{},{},{},{},{},{}",
            l.label,
            l.static_n[0],
            l.static_n[1],
            l.static_n[2],
            l.max_n[0],
            l.max_n[1],
            l.max_n[2],
            l.min_n[0],
            l.min_n[1],
            l.min_n[2],
            l.peak_magnitude_n,
            l.dynamic_ratio
        );
    }
    s
}

fn fatigue_csv(report: &Report) -> String {
    let mut s = String::from("curve,support,cycles,max_range_n,damage_per_hour,hours_to_failure\n");
    for f in &report.fatigue {
        let _ = writeln!(
            s,
            "{},{},{},{},{},{}",
            f.curve, f.support, f.cycles, f.max_range_n, f.damage_per_hour, f.hours_to_failure
        );
    }
    s
}

fn modes_csv(report: &Report) -> String {
    let mut s =
        String::from("mode,frequency_hz,share,rms_coordinate,peak_coordinate,peak_displacement_m,label\n");
    for m in &report.modes {
        let _ = writeln!(
            s,
            "{},{},{},{},{},{},\"{}\"",
            m.mode,
            m.frequency_hz,
            m.share,
            m.rms_coordinate,
            m.peak_coordinate,
            m.peak_displacement_m,
            m.label.replace('"', "'")
        );
    }
    s
}

fn clamp_fatigue_csv(report: &Report) -> String {
    let mut s = String::from(
        "curve,tower,phase,subconductor,plane,static_tension_n,max_range_mpa,max_rotation_rad,cycles,damage_per_hour,hours_to_failure\n",
    );
    for f in &report.clamp_fatigue {
        let _ = writeln!(
            s,
            "{},{},{},{},{},{},{},{},{},{},{}",
            f.curve,
            f.tower,
            f.phase,
            f.subconductor,
            f.plane,
            f.static_tension_n,
            f.max_range_mpa,
            f.max_rotation_rad,
            f.cycles,
            f.damage_per_hour,
            f.hours_to_failure
        );
    }
    s
}

/// Post-processes `results` (see the crate docs) and writes the report files.
///
/// # Errors
/// [`ReportError`] for a file that is not a complete results file of this
/// format version, bad `[post]` settings, or an output that cannot be written.
pub fn post_process(results: &Path, options: &PostOptions) -> Result<PostOutcome, ReportError> {
    let file = ResultsFile::open(results, options.allow_incomplete)?;
    let origin = PathBuf::from(format!("{} (input_toml)", results.display()));
    let post = load_post(&origin, &file.input_toml)?;
    let series = read_series(&file)?;
    let report = build_report(&file.model, &series, &post, results.display().to_string(), file.complete)?;
    let dir = options.out_dir.clone().unwrap_or_else(|| {
        let stem = results.file_stem().map_or("results".into(), |s| s.to_string_lossy().to_string());
        results.with_file_name(format!("{stem}_post"))
    });
    std::fs::create_dir_all(&dir)
        .map_err(|e| ReportError::Output { path: dir.clone(), message: e.to_string() })?;
    let json_path = dir.join("report.json");
    // A stale report.json must not stand beside new tables.
    let _ = std::fs::remove_file(&json_path);
    let mut written = Vec::new();
    for (name, text) in [
        ("clearance.csv", clearance_csv(&series, &file.model)),
        ("envelope.csv", envelope_csv(&report)),
        ("loads.csv", loads_csv(&report)),
        ("fatigue.csv", fatigue_csv(&report)),
        ("clamp_fatigue.csv", clamp_fatigue_csv(&report)),
        ("modes.csv", modes_csv(&report)),
    ] {
        let path = dir.join(name);
        write_atomic(&path, &text)?;
        written.push(path);
    }
    if options.xdmf && file.complete {
        let target = results.with_extension("xdmf");
        crate::xdmf::write_xdmf(results, &target)
            .map_err(|e| ReportError::Output { path: target.clone(), message: e.to_string() })?;
        written.push(PathBuf::from(format!("{}.h5", target.display())));
        written.push(target);
    }
    written.extend(crate::plots::write_plots(&report, &series, &dir)?);
    let json = serde_json::to_string_pretty(&report)
        .map_err(|e| ReportError::Output { path: json_path.clone(), message: e.to_string() })?;
    write_atomic(&json_path, &json)?;
    written.push(json_path);
    let records = series.time.len().max(1) as f64;
    Ok(PostOutcome {
        report,
        written,
        clearance_work: (series.clearance_work.0, series.clearance_work.1 as f64 / records),
        clearance_seconds_per_record: series.clearance_seconds / records,
    })
}
