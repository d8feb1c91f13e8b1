//! `glaze compare STUDY_DIR`: the layouts of a study side by side, ranked,
//! as Markdown and one self-contained HTML page with the plots.

use super::CAUTION;
use glaze_study::{compare_study, StudyError};
use std::path::Path;

/// Runs `glaze compare`; returns whether every case of the study is complete.
pub fn compare(dir: &Path, quiet: bool) -> Result<bool, StudyError> {
    let (c, written) = compare_study(dir)?;
    let incomplete: Vec<_> = c.incomplete().collect();
    if !quiet {
        out!("study \"{}\": {} cases, {} complete", c.study, c.cases.len(), c.cases.len() - incomplete.len());
        out!(
            "{:>4}  {:<24} {:>9} {:>8} {:>10} {:>12} {:>10}",
            "rank",
            "layout",
            "complete",
            "inside",
            "margin m",
            "worst p-p m",
            "T / RTS"
        );
        for r in &c.layouts {
            out!(
                "{:>4}  {:<24} {:>9} {:>8} {:>10} {:>12.3} {:>10.3}",
                r.rank,
                r.layout,
                format!("{}/{}", r.complete, r.cases),
                r.inside_clearance,
                r.worst_margin_m.map_or("—".into(), |m| format!("{m:.3}")),
                r.max_vertical_peak_to_peak_m,
                r.peak_tension_share_of_rated
            );
        }
        for m in &incomplete {
            out!(
                "  not complete: {} ({:?}{})",
                m.id,
                m.status,
                m.failure.as_deref().map_or(String::new(), |f| format!(": {f}"))
            );
        }
        for w in &written {
            out!("wrote {}", w.display());
        }
        out!("{CAUTION}");
    }
    Ok(incomplete.is_empty())
}
