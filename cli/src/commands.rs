//! One function per command.

use glaze_engine::analysis::run_static as solve_static;
use glaze_engine::results::ResultsWriter;
use glaze_engine::spec::StringingTarget;
use glaze_engine::summary::ModelSummary;
use glaze_engine::{input, model, ElementRegistry, GlazeError, InputErrorKind};
use std::path::Path;
use std::time::Instant;

/// The caution every report carries.
pub const CAUTION: &str =
    "Caution: glaze results support, and never replace, the judgement of a licensed engineer \
and the clearances and load cases of the local code.";

/// Exit code for an error (see the crate docs).
pub fn exit_code(e: &GlazeError) -> u8 {
    match e {
        GlazeError::Input(i) if i.kind == InputErrorKind::NotConverged => 3,
        GlazeError::Input(_) => 2,
        GlazeError::Results { .. } => 4,
    }
}

/// `glaze check FILE`.
pub fn check(file: &Path, quiet: bool) -> Result<(), GlazeError> {
    let registry = ElementRegistry::with_builtin();
    let spec = input::load(file, &registry)?;
    let model = model::build(&spec, &registry)?;
    if quiet {
        return Ok(());
    }
    let s = ModelSummary::of(&spec, &model);
    println!("{}: valid", file.display());
    if !spec.title.is_empty() {
        println!("title: {}", spec.title);
    }
    println!(
        "model: {} spans, {} nodes, {} elements of type `{}` ({} per span), {} free DOF, {} supported nodes",
        s.spans.len(),
        s.nodes,
        s.elements,
        spec.element_kind,
        spec.elements_per_span,
        s.dofs,
        s.supports
    );
    let ice = spec.load_case.ice.map_or("no ice".to_string(), |i| {
        format!(
            "radial ice {:.1} mm at {:.0} kg/m³",
            i.thickness * 1e3,
            i.density
        )
    });
    println!(
        "stringing at {:.1} °C; load case `{}`: {:.1} °C, {ice}",
        spec.stringing_temperature, spec.load_case.name, spec.load_case.temperature
    );
    println!();
    println!(
        "{:>4}  {:<10} {:<10} {:<12} {:>9} {:>8}  {:<22} {:>12} {:>10}",
        "span",
        "from",
        "to",
        "conductor",
        "length m",
        "Δh m",
        "stringing target",
        "conductor kg",
        "ice kg"
    );
    for (i, l) in s.spans.iter().enumerate() {
        let target = match l.target {
            StringingTarget::HorizontalTension(h) => format!("H = {h:.0} N"),
            StringingTarget::Sag(d) => format!("sag = {d:.3} m"),
            StringingTarget::CatenaryParameter(c) => format!("H/w = {c:.1} m"),
        };
        println!(
            "{:>4}  {:<10} {:<10} {:<12} {:>9.2} {:>8.2}  {:<22} {:>12.1} {:>10.1}",
            i + 1,
            l.supports[0],
            l.supports[1],
            l.conductor,
            l.horizontal_length,
            l.height_difference,
            target,
            l.conductor_mass,
            l.ice_mass
        );
    }
    Ok(())
}

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
    println!(
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
    println!();
    println!(
        "{:>4}  {:>9} {:>8} {:>10} {:>12} {:>12} {:>12} {:>7}",
        "span", "length m", "sag m", "sag at m", "H N", "T start N", "T end N", "% RTS"
    );
    for (i, s) in result.spans.iter().enumerate() {
        println!(
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
    println!();
    println!("results written to {}", path.display());
    println!("{CAUTION}");
    Ok(())
}
