//! Bad input for tension sections (issue 5, "Must show: Bad input"): each
//! case changes one thing in the shipped demo and must be refused with an
//! error naming the key path and the line on which that key is written.
//! The rules checked are the product's own: a support must carry a span, a
//! tower must give every phase an attachment point, two devices may not grip
//! one phase at one point, a spacer must lie on its span's conductor, and
//! bundles of 1, 2, 3, 4 or 6 subconductors are the ones in service (common
//! practice; CIGRE TB 322 lists those arrangements, from memory).

use glaze_engine::{input, ElementRegistry, InputErrorKind};
use std::path::Path;

fn demo(name: &str) -> String {
    std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("examples").join(name)).unwrap()
}

/// 1-based line of the first line after `after` (a line of the text) that
/// contains `needle`.
fn line_of(text: &str, after: &str, needle: &str) -> usize {
    let start = text.lines().position(|l| l.contains(after)).unwrap_or_else(|| panic!("`{after}` not found"));
    text.lines()
        .enumerate()
        .skip(start)
        .find(|(_, l)| l.contains(needle))
        .map(|(i, _)| i + 1)
        .unwrap_or_else(|| panic!("`{needle}` not found after `{after}`"))
}

/// Loads `text` (as a file in examples/, so tables resolve), expects an
/// error at `key` of `kind` on `line`, returns the message.
fn expect_error(text: &str, key: &str, kind: InputErrorKind, line: usize) -> String {
    let registry = ElementRegistry::with_builtin();
    let err = match input::load_str(Path::new("examples/bad_section.toml"), text, &registry) {
        Ok(_) => panic!("accepted bad input (expected an error at {key})"),
        Err(e) => e,
    };
    assert_eq!(err.key, key, "wrong key: {err}");
    assert_eq!(err.kind, kind, "wrong kind: {err}");
    assert_eq!(err.line, line, "wrong line: {err}");
    assert!(err.to_string().contains(&format!("bad_section.toml:{line}")), "{err}");
    err.message
}

#[test]
fn the_demo_section_loads() {
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(
        Path::new("examples/section_five_spans.toml"),
        &demo("section_five_spans.toml"),
        &registry,
    )
    .unwrap();
    let section = spec.section.expect("a tension section");
    assert_eq!(section.towers.len(), 6);
    assert_eq!(section.phases.len(), 4);
    assert_eq!(section.devices.len(), 4, "the interphase-spacer layout");
}

#[test]
fn a_support_referenced_by_no_span() {
    let text = demo("row_of_spans.toml").replacen(
        "[[supports]]\nname = \"T1\"",
        "[[supports]]\nname = \"SPARE\"\nposition = [0.0, 50.0, 32.0]\n\n[[supports]]\nname = \"T1\"",
        1,
    );
    let line = line_of(&text, "name = \"SPARE\"", "name = \"SPARE\"");
    let msg = expect_error(&text, "supports[0].name", InputErrorKind::InvalidValue, line);
    assert!(msg.contains("SPARE") && msg.contains("no span"), "{msg}");
}

#[test]
fn a_tower_without_an_attachment_for_a_phase() {
    let base = demo("section_five_spans.toml");
    let old = "attachments = { A = [4.5, 34.0], B = [4.5, 28.5], C = [4.5, 23.0], EW = [0.0, 39.0] }";
    assert!(base.contains(old), "the demo's S-3 attachments changed; update this test");
    let text = base.replacen(old, "attachments = { A = [4.5, 34.0], B = [4.5, 28.5], C = [4.5, 23.0] }", 1);
    let line = line_of(&text, "name = \"S-3\"", "attachments =");
    let msg = expect_error(&text, "towers[2].attachments", InputErrorKind::MissingKey, line);
    assert!(msg.contains("EW") && msg.contains("S-3"), "{msg}");
}

#[test]
fn overlapping_devices() {
    let base = demo("section_five_spans.toml");
    let last = "  { type = \"interphase_spacer\", span = 4, distance = 195.0, phases = [\"B\", \"C\"], hinged = true, axial_stiffness = 2.0e7, mass = 35.0 },\n";
    assert!(base.contains(last), "the demo's layout changed; update this test");
    // A marker mass 0.2 m from where an interphase spacer grips phase A.
    let extra = "  { type = \"lumped_mass\", span = 2, distance = 230.2, phase = \"A\", mass = 5.0 },\n";
    let text = base.replacen(last, &format!("{last}{extra}"), 1);
    let line = line_of(&text, "[layouts.interphase_spacers]", "lumped_mass");
    let msg =
        expect_error(&text, "layouts.interphase_spacers.devices[4]", InputErrorKind::InvalidValue, line);
    assert!(msg.contains("overlaps") && msg.contains("devices[0]"), "{msg}");
}

#[test]
fn a_spacer_outside_its_span() {
    let base = demo("section_five_spans.toml");
    // Span 3 (S-3 to S-4) is 280 m long.
    let text = base.replacen(
        "max_subspan = 60.0            # m",
        "positions = [{ span = 3, distances = [100.0, 300.0] }]",
        1,
    );
    assert_ne!(text, base, "the demo's spacer line changed; update this test");
    let line = line_of(&text, "[spacers]", "positions =");
    let msg = expect_error(&text, "spacers.positions[0].distances", InputErrorKind::InvalidValue, line);
    assert!(msg.contains("300") && msg.contains("span 3"), "{msg}");
}

#[test]
fn a_bundle_of_five() {
    let base = demo("section_five_spans.toml");
    let text = base.replacen(
        "bundle = { count = 2, spacing = 0.457 }",
        "bundle = { count = 5, spacing = 0.457 }",
        1,
    );
    let line = line_of(&text, "name = \"A\"", "count = 5");
    let msg = expect_error(&text, "phases[0].bundle.count", InputErrorKind::InvalidValue, line);
    assert!(msg.contains("1, 2, 3, 4 or 6") && msg.contains('5'), "{msg}");
}

#[test]
fn a_section_meshed_with_elements_that_cannot_twist() {
    let base = demo("section_five_spans.toml");
    let text = base.replacen("type = \"beam\"", "type = \"cable\"", 1);
    let line = line_of(&text, "[mesh]", "type = \"cable\"");
    let msg = expect_error(&text, "mesh.type", InputErrorKind::InvalidValue, line);
    assert!(msg.contains("beam"), "{msg}");
}

#[test]
fn bad_linear_dashpots() {
    let base = demo("section_five_spans.toml");
    let last = "  { type = \"interphase_spacer\", span = 4, distance = 195.0, phases = [\"B\", \"C\"], hinged = true, axial_stiffness = 2.0e7, mass = 35.0 },\n";
    assert!(base.contains(last), "the demo's layout changed; update this test");
    for (extra, field, needle) in [
        ("{ type = \"linear_dashpot\", span = 1, distance = 100.0, phase = \"A\", coefficient = -5.0 }", "coefficient", "-5"),
        (
            "{ type = \"linear_dashpot\", span = 1, distance = 100.0, phase = \"A\", coefficient = 50.0, direction = \"sideways\" }",
            "direction",
            "vertical, across or along",
        ),
        (
            "{ type = \"linear_dashpot\", span = 1, distance = 100.0, phase = \"A\", coefficient = 50.0, to = \"B\", direction = \"vertical\" }",
            "direction",
            "line joining them",
        ),
        ("{ type = \"linear_dashpot\", span = 1, distance = 100.0, phase = \"A\", coefficient = 50.0, to = \"A\" }", "to", "two different phases"),
    ] {
        let text = base.replacen(last, &format!("{last}  {extra},\n"), 1);
        let line = line_of(&text, "[layouts.interphase_spacers]", "linear_dashpot");
        let msg = expect_error(
            &text,
            &format!("layouts.interphase_spacers.devices[4].{field}"),
            InputErrorKind::InvalidValue,
            line,
        );
        assert!(msg.contains(needle), "{msg}");
    }
}

#[test]
fn bad_spacer_dampers() {
    let base = demo("section_five_spans.toml");
    let rigid = "kind = \"rigid\"\nmax_subspan = 60.0            # m\nmass = 2.5                    # kg\n";
    assert!(base.contains(rigid), "the demo's spacers changed; update this test");
    let damper = |extra: &str| {
        base.replacen(rigid, &format!("kind = \"damper\"\nmax_subspan = 60.0\nmass = 2.5\n{extra}"), 1)
    };
    // A damper without its hinge data names the missing key at the table.
    let text = damper("hinge_damping = 1.0\n");
    let line = line_of(&text, "[spacers]", "[spacers]");
    let msg = expect_error(&text, "spacers.hinge_stiffness", InputErrorKind::MissingKey, line);
    assert!(msg.contains("N·m/rad"), "{msg}");
    for (extra, key, needle) in [
        ("hinge_stiffness = -3.0\nhinge_damping = 1.0\n", "hinge_stiffness", "-3"),
        ("hinge_stiffness = 30.0\nhinge_damping = -1.0\n", "hinge_damping", "-1"),
        ("hinge_stiffness = 30.0\nhinge_damping = 1.0\nframe_mass = 2.5\n", "frame_mass", "not less than"),
        ("hinge_stiffness = 30.0\nhinge_damping = 1.0\nframe_inertia = 0.1\n", "frame_inertia", "frame_mass"),
    ] {
        let text = damper(extra);
        let line = line_of(&text, "[spacers]", &format!("{key} ="));
        let msg = expect_error(&text, &format!("spacers.{key}"), InputErrorKind::InvalidValue, line);
        assert!(msg.contains(needle), "{msg}");
    }
    // Hinge data on a spacer of another kind.
    let text = base.replacen(rigid, &format!("{rigid}hinge_damping = 1.0\n"), 1);
    let line = line_of(&text, "[spacers]", "hinge_damping =");
    let msg = expect_error(&text, "spacers.hinge_damping", InputErrorKind::InvalidValue, line);
    assert!(msg.contains("damper"), "{msg}");
}

#[test]
fn a_line_angle_beyond_what_one_tower_turns() {
    let base = demo("section_five_spans.toml");
    let old = "attachments = { A = [4.5, 34.0], B = [4.5, 28.5], C = [4.5, 23.0], EW = [0.0, 39.0] }";
    assert!(base.contains(old), "the demo's S-3 attachments changed; update this test");
    let text = base.replacen(old, &format!("line_angle = 75.0\n{old}"), 1);
    let line = line_of(&text, "name = \"S-3\"", "line_angle =");
    let msg = expect_error(&text, "towers[2].line_angle", InputErrorKind::InvalidValue, line);
    assert!(msg.contains("75") && msg.contains("60"), "{msg}");
    // Within the range the same section loads and turns.
    let text = base.replacen(old, &format!("line_angle = -15.0\n{old}"), 1);
    let registry = ElementRegistry::with_builtin();
    let spec = input::load_str(Path::new("examples/angle.toml"), &text, &registry).unwrap();
    let angle = spec.section.expect("a section").towers[2].line_angle;
    assert!((angle + 15f64.to_radians()).abs() < 1e-15, "{angle}");
}
