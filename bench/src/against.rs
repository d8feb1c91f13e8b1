//! `glaze bench --against OLD.json`: speed ratios of the cases two records
//! share, and the cases whose results fingerprint moved beyond a tolerance,
//! so a solver change is judged on speed and on the answer together.

use crate::record::{fingerprint_difference, BenchRecord};
use std::fmt::Write as _;

/// Default tolerance on the relative fingerprint difference (the faster
/// paths must leave the answer alone up to round-off of a changed order of
/// operations; common practice for regression baselines).
pub const DEFAULT_TOLERANCE: f64 = 1e-6;

/// One case of a comparison.
#[derive(Debug, Clone)]
pub struct CaseComparison {
    /// Case name.
    pub name: String,
    /// New steps per second over old.
    pub speed_ratio: f64,
    /// New peak memory over old.
    pub memory_ratio: f64,
    /// Largest relative fingerprint difference.
    pub fingerprint_difference: f64,
    /// Whether it exceeds the tolerance.
    pub changed: bool,
}

/// Compares `new` with `old`; cases in only one of them are listed apart.
pub fn compare(new: &BenchRecord, old: &BenchRecord, tolerance: f64) -> (Vec<CaseComparison>, Vec<String>) {
    let mut out = Vec::new();
    let mut unmatched = Vec::new();
    for c in &new.cases {
        match old.cases.iter().find(|o| o.name == c.name && o.linear_solver == c.linear_solver) {
            Some(o) => {
                let d = fingerprint_difference(&c.fingerprint, &o.fingerprint);
                out.push(CaseComparison {
                    name: c.label(),
                    speed_ratio: c.steps_per_s / o.steps_per_s.max(1e-300),
                    memory_ratio: if o.peak_memory_bytes > 0 {
                        c.peak_memory_bytes as f64 / o.peak_memory_bytes as f64
                    } else {
                        f64::NAN
                    },
                    fingerprint_difference: d,
                    changed: d.is_nan() || d > tolerance,
                });
            }
            None => unmatched.push(format!("{} (new only)", c.label())),
        }
    }
    for o in &old.cases {
        if !new.cases.iter().any(|c| c.name == o.name && c.linear_solver == o.linear_solver) {
            unmatched.push(format!("{} (old only)", o.label()));
        }
    }
    (out, unmatched)
}

/// The comparison as a text table.
pub fn table(rows: &[CaseComparison], unmatched: &[String], tolerance: f64) -> String {
    let mut s = String::new();
    let _ =
        writeln!(s, "{:<12} {:>12} {:>12} {:>14}  result", "case", "speed ×", "memory ×", "fingerprint Δ");
    for r in rows {
        let _ = writeln!(
            s,
            "{:<12} {:>12.3} {:>12.3} {:>14.2e}  {}",
            r.name,
            r.speed_ratio,
            r.memory_ratio,
            r.fingerprint_difference,
            if r.changed { format!("CHANGED (beyond {tolerance:.0e})") } else { "same".into() }
        );
    }
    for u in unmatched {
        let _ = writeln!(s, "{u}: not compared");
    }
    s
}
