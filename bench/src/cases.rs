//! Scale cases: tension sections generated from a few numbers (spans,
//! phases, subconductors per phase), so the benchmark covers 1 k to 200 k
//! DOF without hand-written inputs. Every case is an invented section:
//! 400 m spans on gently rolling ground between two dead-ends, suspension
//! I-strings in between, phases stacked on one side of the towers and an
//! earth wire on top, ACSR 26/7 795 kcmil class conductors (ASTM B232
//! values, from memory) under crescent glaze ice in a 9 m/s cross wind,
//! 10 m beam elements, spacers at most 60 m apart.

/// The coefficient table of the iced section, shipped with the examples.
const CRESCENT_ICE: &str = include_str!("../../examples/aero/crescent_ice.csv");
/// The coefficient table of the bare conductor.
const BARE_ROUND: &str = include_str!("../../examples/aero/bare_round.csv");

/// One generated section.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ScaleCase {
    /// Spans between the two dead-ends.
    pub spans: usize,
    /// Phases (1 to 3).
    pub phases: usize,
    /// Subconductors per phase (1, 2, 3, 4 or 6).
    pub bundle: usize,
    /// With an earth wire on top.
    pub earth_wire: bool,
}

impl ScaleCase {
    /// Name `sSpBb` (plus `e` with an earth wire), e.g. `s5p3b2e`.
    pub fn name(&self) -> String {
        format!("s{}p{}b{}{}", self.spans, self.phases, self.bundle, if self.earth_wire { "e" } else { "" })
    }

    /// Parses a name made by [`ScaleCase::name`].
    pub fn parse(name: &str) -> Option<Self> {
        let (body, earth_wire) = match name.strip_suffix('e') {
            Some(b) => (b, true),
            None => (name, false),
        };
        let rest = body.strip_prefix('s')?;
        let (spans, rest) = rest.split_once('p')?;
        let (phases, bundle) = rest.split_once('b')?;
        let c = Self {
            spans: spans.parse().ok()?,
            phases: phases.parse().ok()?,
            bundle: bundle.parse().ok()?,
            earth_wire,
        };
        let ok =
            (1..=60).contains(&c.spans) && (1..=3).contains(&c.phases) && [1, 2, 3, 4, 6].contains(&c.bundle);
        ok.then_some(c)
    }

    /// Writes the coefficient tables into `dir` and returns the input text
    /// of the case for `duration` s of simulated time.
    pub fn input(
        &self,
        dir: &std::path::Path,
        duration: f64,
        solver: glaze_solvers::SolverBackend,
    ) -> std::io::Result<String> {
        std::fs::create_dir_all(dir)?;
        // Absolute, since the input resolves table paths from its own folder.
        let dir = &dir.canonicalize()?;
        let ice = dir.join("crescent_ice.csv");
        let bare = dir.join("bare_round.csv");
        std::fs::write(&ice, CRESCENT_ICE)?;
        std::fs::write(&bare, BARE_ROUND)?;
        let phase_names = ["A", "B", "C"];
        let heights = [32.0, 26.5, 21.0];
        let mut attach: Vec<String> =
            (0..self.phases).map(|p| format!("{} = [4.5, {}]", phase_names[p], heights[p])).collect();
        if self.earth_wire {
            attach.push("EW = [0.0, 37.0]".into());
        }
        let attachments = attach.join(", ");
        let mut s = String::new();
        s += &format!(
            "# Scale case {} of glaze bench (generated; invented section).\n[glaze]\nschema_version = 1\ntitle = \"bench {}\"\n\n",
            self.name(),
            self.name()
        );
        s += &format!(
            "[conductors.acsr_795]\ndiameter = 0.02814\nmass_per_length = 1.628\naxial_stiffness = 3.28e7\nbending_stiffness = 44.0\ntorsional_stiffness = 35.0\nthermal_expansion = 18.9e-6\nrated_strength = 140100.0\naero_table = \"{}\"\n\n",
            bare.display()
        );
        s += "[conductors.ehs_38]\ndiameter = 0.00952\nmass_per_length = 0.406\naxial_stiffness = 9.5e6\nbending_stiffness = 6.0\ntorsional_stiffness = 5.0\nthermal_expansion = 11.5e-6\nrated_strength = 68500.0\n\n";
        s += "[insulators.i_string]\nkind = \"suspension\"\nlength = 2.6\nmass = 90.0\n\n[insulators.dead_end]\nkind = \"dead_end\"\nlength = 3.2\nmass = 120.0\n\n";
        for t in 0..=self.spans {
            let dead_end = t == 0 || t == self.spans;
            let ground = 210.0 + 8.0 * ((t as f64) * 1.3).sin();
            s += &format!(
                "[[towers]]\nname = \"T{t}\"\nchainage = {:.1}\nground = {ground:.2}\nkind = \"{}\"\ninsulator = \"{}\"\nattachments = {{ {attachments} }}\n\n",
                400.0 * t as f64,
                if dead_end { "dead_end" } else { "suspension" },
                if dead_end { "dead_end" } else { "i_string" },
            );
        }
        for name in &phase_names[..self.phases] {
            let bundle = if self.bundle > 1 {
                format!("bundle = {{ count = {}, spacing = 0.457 }}\n", self.bundle)
            } else {
                String::new()
            };
            s += &format!(
                "[[phases]]\nname = \"{name}\"\nconductor = \"acsr_795\"\n{bundle}horizontal_tension = 24000.0\n\n"
            );
        }
        if self.earth_wire {
            s += "[[phases]]\nname = \"EW\"\nconductor = \"ehs_38\"\nearth_wire = true\nhorizontal_tension = 11000.0\n\n";
        }
        if self.bundle > 1 {
            s += "[spacers]\nkind = \"rigid\"\nmax_subspan = 60.0\nmass = 2.5\n\n";
        }
        s += "[mesh]\ntype = \"beam\"\nelement_length = 10.0\n\n[stringing]\ntemperature = 15.0\n\n";
        s += &format!(
            "[load_case]\nname = \"crescent glaze ice, cross wind\"\ntemperature = -5.0\nice = {{ thickness = 0.0125, aero_table = \"{}\", orientation = -30.0 }}\nwind = {{ speed = 9.0, direction = 90.0, reference_height = 10.0, profile = \"power_law\", exponent = 0.16 }}\n\n",
            ice.display()
        );
        s += &format!(
            "[dynamics]\nduration = {duration}\ntime_step = 0.01\noutput_interval = 0.05\nscheme = \"hht\"\nalpha = -0.05\ndamping = {{ modes = [1, 12], ratios = [0.005, 0.005] }}\nperturbation = {{ mode = 1, amplitude = 0.05, start = \"velocity\" }}\nlinear_solver = \"{}\"\n",
            solver.name()
        );
        Ok(s)
    }
}

/// Named sets of cases.
pub fn named_set(name: &str) -> Option<Vec<ScaleCase>> {
    let c = |spans, phases, bundle, earth_wire| ScaleCase { spans, phases, bundle, earth_wire };
    match name {
        // About 1 k, 10 k and 50 k DOF: a few minutes on two cores.
        "standard" => Some(vec![c(1, 1, 2, false), c(5, 3, 2, true), c(10, 3, 4, true)]),
        // 1 k to 200 k DOF for the growth of time per step with DOF.
        "scale" => Some(vec![
            c(1, 1, 2, false),
            c(2, 3, 2, true),
            c(5, 3, 2, true),
            c(10, 3, 4, true),
            c(20, 3, 4, true),
            c(50, 3, 4, true),
        ]),
        // The demo-like section of issue 7's main target.
        "demo" => Some(vec![c(5, 3, 2, true)]),
        other => ScaleCase::parse(other).map(|c| vec![c]),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip() {
        for c in named_set("scale").unwrap() {
            assert_eq!(ScaleCase::parse(&c.name()), Some(c));
        }
        assert_eq!(ScaleCase::parse("s5p4b2"), None);
        assert_eq!(ScaleCase::parse("nonsense"), None);
    }

    #[test]
    fn generated_inputs_validate() {
        let dir = std::env::temp_dir().join(format!("glaze-bench-cases-{}", std::process::id()));
        let registry = glaze_engine::ElementRegistry::with_builtin();
        for c in [
            ScaleCase { spans: 2, phases: 3, bundle: 4, earth_wire: true },
            ScaleCase { spans: 1, phases: 1, bundle: 1, earth_wire: false },
        ] {
            let text = c.input(&dir, 1.0, glaze_solvers::SolverBackend::default()).unwrap();
            let spec = glaze_engine::input::load_str(&dir.join("case.toml"), &text, &registry)
                .unwrap_or_else(|e| panic!("{}: {e}\n{text}", c.name()));
            assert!(spec.warnings.is_empty(), "{}: {:?}", c.name(), spec.warnings);
        }
        let _ = std::fs::remove_dir_all(&dir);
    }
}
