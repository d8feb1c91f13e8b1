//! `glaze static FILE --out RESULT.h5`: static equilibrium and span table.

use super::CAUTION;
use glaze_engine::analysis::run_static as solve_static;
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, model, ElementRegistry, GlazeError};
use std::path::Path;
use std::time::Instant;

/// `glaze static FILE --out RESULT.h5`.
pub fn run_static(file: &Path, out: &Path, quiet: bool) -> Result<(), GlazeError> {
    let start = Instant::now();
    let registry = ElementRegistry::with_builtin();
    let outcome = (|| {
        let spec = input::load(file, &registry)?;
        let model = model::build(&spec, &registry)?;
        let writer = ResultsWriter::create(out, &spec.source)?;
        writer.write_model(&model)?;
        let result = solve_static(&spec, &model)?;
        writer.write_static(&model, &result, &spec.load_case.name)?;
        let path = writer.finish(start.elapsed().as_secs_f64())?;
        Ok::<_, GlazeError>((spec, result, path))
    })();
    let (spec, result, path) = match outcome {
        Ok(v) => v,
        Err(e) => {
            // A failed run leaves no results file at the target path, so no
            // stale file from an earlier run can be taken for this one.
            let _ = std::fs::remove_file(out);
            return Err(e);
        }
    };
    if quiet {
        return Ok(());
    }
    let f = &result.report.factor_stats;
    out!(
        "static equilibrium of `{}` ({}): {} load steps, {} Newton iterations, {} cut-backs; \
         {} symbolic and {} numeric factorisations ({} Cholesky, {} LU)",
        spec.load_case.name,
        file.display(),
        result.report.steps,
        result.report.total_iterations,
        result.report.cutbacks,
        f.symbolic,
        f.numeric_cholesky + f.numeric_lu,
        f.numeric_cholesky,
        f.numeric_lu
    );
    out!();
    out!(
        "{:>4}  {:>9} {:>8} {:>10} {:>12} {:>12} {:>12} {:>7}",
        "span",
        "length m",
        "sag m",
        "sag at m",
        "H N",
        "T start N",
        "T end N",
        "% RTS"
    );
    for (i, s) in result.spans.iter().enumerate() {
        out!(
            "{:>4}  {:>9.2} {:>8.3} {:>10.2} {:>12.1} {:>12.1} {:>12.1} {:>7.2}",
            i + 1,
            s.horizontal_length,
            s.sag,
            s.sag_position,
            s.horizontal_tension,
            s.support_tension[0],
            s.support_tension[1],
            100.0 * s.strength_ratio
        );
    }
    out!();
    out!("results written to {}", path.display());
    out!("{CAUTION}");
    Ok(())
}
