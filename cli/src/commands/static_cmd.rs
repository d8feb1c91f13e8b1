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
        super::print_warnings(&spec, quiet);
        let model = model::build(&spec, &registry)?;
        let writer = ResultsWriter::create(out, &spec.source)?;
        writer.write_model(&model)?;
        let result = solve_static(&spec, &model)?;
        writer.write_static(&model, &result, &spec.load_case.name)?;
        let path = writer.finish(start.elapsed().as_secs_f64())?;
        let lines = glaze_engine::summary::ModelSummary::of(&spec, &model).spans;
        let strings = string_lines(&spec, &model, &result);
        Ok::<_, GlazeError>((spec, result, path, lines, strings))
    })();
    let (spec, result, path, lines, strings) = match outcome {
        Ok(v) => v,
        Err(e) => {
            // A failed run leaves no results file at the target path, so no
            // stale file from an earlier run can be taken for this one.
            super::remove_results(out);
            return Err(super::one_line(e));
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
        "{:>4}  {:<6} {:<10} {:<10} {:>9} {:>8} {:>10} {:>12} {:>12} {:>12} {:>7}",
        "span",
        "wire",
        "from",
        "to",
        "length m",
        "sag m",
        "sag at m",
        "H N",
        "T start N",
        "T end N",
        "% RTS"
    );
    for (s, line) in result.spans.iter().zip(&lines) {
        out!(
            "{:>4}  {:<6} {:<10} {:<10} {:>9.2} {:>8.3} {:>10.2} {:>12.1} {:>12.1} {:>12.1} {:>7.2}",
            line.route_span + 1,
            if line.wire.is_empty() { "-" } else { &line.wire },
            line.supports[0],
            line.supports[1],
            s.horizontal_length,
            s.sag,
            s.sag_position,
            s.horizontal_tension,
            s.support_tension[0],
            s.support_tension[1],
            100.0 * s.strength_ratio
        );
    }
    if !strings.is_empty() {
        out!();
        out!("suspension strings: swing of the yoke from plumb along and across the line (at an angle tower, its bisector);");
        out!("dead-end strings: angle below the horizontal and in plan from the line");
        out!(
            "{:<10} {:<6} {:>12} {:>12} {:>12}",
            "string at",
            "phase",
            "along° / dip°",
            "across°",
            "tension N"
        );
        for line in &strings {
            out!("{line}");
        }
    }
    out!();
    out!("results written to {}", path.display());
    out!("{CAUTION}");
    Ok(())
}

/// One line per insulator string: tower, phase, swing of the yoke from
/// below the hinge along and across the line (degrees), axial force of its
/// (first) leg.
fn string_lines(
    spec: &glaze_engine::spec::SectionSpec,
    model: &glaze_engine::model::Model,
    result: &glaze_engine::analysis::StaticResult,
) -> Vec<String> {
    let Some(section) = &spec.section else { return Vec::new() };
    model
        .strings
        .iter()
        .map(|s| {
            let top = result.config.positions[s.hinges[0]];
            let d = result.config.positions[s.yoke] - top;
            // In the route's frame at the tower (the bisector at an angle tower).
            let (along, across) = model.route_axes(s.tower);
            let (dx, dy, dz) = (d.dot(&along), d.dot(&across), d.z);
            let tension = s.elements.first().map_or(0.0, |&e| result.element_output[e].axial_force);
            let (a, b) = match section.towers[s.tower].kind {
                glaze_engine::spec::TowerKind::DeadEnd => {
                    ((-dz).atan2(dx.abs()).to_degrees(), dy.atan2(dx.abs()).to_degrees())
                }
                _ => (dx.atan2(-dz).to_degrees(), dy.atan2(-dz).to_degrees()),
            };
            format!(
                "{:<10} {:<6} {:>12.2} {:>12.2} {:>12.1}",
                section.towers[s.tower].name, section.phases[s.phase].name, a, b, tension
            )
        })
        .collect()
}
