//! `glaze modes FILE --count K --out RESULT.h5`: the static state, then the
//! lowest K natural modes about it, a table and `/modes` in the results file.

use super::CAUTION;
use glaze_engine::analysis::mode_shape::ENERGY_CLASSES;
use glaze_engine::analysis::{run_modal, run_static, EigenMethod, ModalError, ModalSettings};
use glaze_engine::results::ResultsWriter;
use glaze_engine::{input, model, ElementRegistry, GlazeError, InputError, InputErrorKind};
use std::path::Path;
use std::time::Instant;

/// `--method` of `glaze modes`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum SolverChoice {
    /// Dense for small models, Lanczos otherwise.
    Auto,
    /// Dense shift-invert (small models, reference).
    Dense,
    /// Sparse shift-invert Lanczos.
    Lanczos,
}

impl From<SolverChoice> for EigenMethod {
    fn from(c: SolverChoice) -> Self {
        match c {
            SolverChoice::Auto => EigenMethod::Auto,
            SolverChoice::Dense => EigenMethod::Dense,
            SolverChoice::Lanczos => EigenMethod::Lanczos,
        }
    }
}

/// An error about `--count`, reported against the input file like an input
/// error (exit code 2); line 0 because the value is not in the file.
fn count_error(file: &Path, message: String) -> GlazeError {
    GlazeError::Input(InputError {
        file: file.to_path_buf(),
        line: 0,
        key: "--count".into(),
        message,
        kind: InputErrorKind::InvalidValue,
    })
}

/// `glaze modes FILE --count K --out RESULT.h5 [--method M]`.
pub fn run_modes(
    file: &Path,
    count: usize,
    method: SolverChoice,
    out: &Path,
    quiet: bool,
) -> Result<(), GlazeError> {
    let start = Instant::now();
    let registry = ElementRegistry::with_builtin();
    let outcome = (|| {
        let spec = input::load(file, &registry)?;
        super::print_warnings(&spec, quiet);
        let model = model::build(&spec, &registry)?;
        let dofs = model.dofs.len();
        if count == 0 || count > dofs {
            let asked = if count == 0 { "no modes".to_string() } else { format!("{count} modes") };
            return Err(count_error(
                file,
                format!(
                    "asks for {asked}, but the model has {dofs} free degrees of freedom; \
                     ask for between 1 and {dofs}"
                ),
            ));
        }
        let writer = ResultsWriter::create(out, &spec.source)?;
        writer.write_model(&model)?;
        let stat = run_static(&spec, &model)?;
        writer.write_static(&model, &stat, &spec.load_case.name)?;
        let settings = ModalSettings { method: method.into(), ..ModalSettings::new(count) };
        let modes = run_modal(&model, &stat, &settings).map_err(|e| match e {
            ModalError::TooManyModes { .. } | ModalError::NoModes => count_error(file, e.to_string()),
            e => GlazeError::from(e),
        })?;
        writer.write_modes(&model, &modes)?;
        let path = writer.finish(start.elapsed().as_secs_f64())?;
        Ok::<_, GlazeError>((spec, modes, path))
    })();
    let (spec, modes, path) = match outcome {
        Ok(v) => v,
        Err(e) => {
            // No results file at the target path after a failed run.
            super::remove_results(out);
            return Err(super::one_line(e));
        }
    };
    if quiet {
        return Ok(());
    }
    out!(
        "{} natural modes of `{}` about the static state of `{}`: {} free DOF, {} eigen solver, \
         shift {:.3e} rad²/s², tangent asymmetry {:.1e} before symmetrising",
        modes.frequency_hz.len(),
        file.display(),
        spec.load_case.name,
        modes.dofs,
        modes.method.name(),
        modes.shift,
        modes.stiffness_asymmetry
    );
    out!();
    out!(
        "{:>4}  {:>11} {:>10}  {:>8} {:>8} {:>8} {:>8}  label",
        "mode",
        "f Hz",
        "T s",
        "vert %",
        "trans %",
        "long %",
        "tors %"
    );
    for i in 0..modes.frequency_hz.len() {
        let s = modes.energy_share[i];
        out!(
            "{:>4}  {:>11.5} {:>10.4}  {:>8.1} {:>8.1} {:>8.1} {:>8.1}  {}",
            i + 1,
            modes.frequency_hz[i],
            modes.period_s[i],
            100.0 * s[0],
            100.0 * s[1],
            100.0 * s[2],
            100.0 * s[3],
            modes.labels[i]
        );
    }
    out!();
    out!(
        "shares of modal kinetic energy: {} (horizontal, across the span), {}, {}",
        ENERGY_CLASSES[0..2].join(", "),
        ENERGY_CLASSES[2],
        ENERGY_CLASSES[3]
    );
    out!("results written to {}", path.display());
    out!("{CAUTION}");
    Ok(())
}
