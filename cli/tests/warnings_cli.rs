//! Every command prints the input's warnings on stderr as
//! `warning: FILE:LINE: KEY: message` and still runs (issue 8).

use std::path::Path;
use std::process::Command;

const EXAMPLES: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/../examples");

#[test]
fn every_command_prints_the_warnings() {
    let dir = tempfile::tempdir().unwrap();
    let aero = dir.path().join("aero");
    std::fs::create_dir(&aero).unwrap();
    for t in ["bare_round.csv", "crescent_ice.csv"] {
        std::fs::copy(Path::new(EXAMPLES).join("aero").join(t), aero.join(t)).unwrap();
    }
    // Ice denser than pure ice: legal, implausible, harmless to every stage.
    let text = std::fs::read_to_string(Path::new(EXAMPLES).join("iced_span_galloping.toml")).unwrap();
    let text =
        text.replacen("ice = { thickness = 0.0125,", "ice = { thickness = 0.0125, density = 990.0,", 1);
    let line = text.lines().position(|l| l.contains("density = 990.0")).unwrap() + 1;
    let file = dir.path().join("dense_ice.toml");
    std::fs::write(&file, &text).unwrap();
    let f = file.to_str().unwrap();
    let out = dir.path().join("r.h5");
    let o = out.to_str().unwrap();
    let expected = format!("warning: {f}:{line}: load_case.ice.density: 990 kg/m³ is denser than pure ice");
    for args in [
        vec!["check", f],
        vec!["static", f, "--out", o],
        vec!["modes", f, "--count", "3", "--out", o],
        vec!["screen", f, "--format", "csv"],
        vec!["run", f, "--out", o],
    ] {
        let r = Command::new(env!("CARGO_BIN_EXE_glaze")).args(&args).output().unwrap();
        let stderr = String::from_utf8_lossy(&r.stderr);
        assert_eq!(r.status.code(), Some(0), "{args:?}: {stderr}");
        assert_eq!(stderr.matches(&expected).count(), 1, "{args:?}: expected `{expected}` once in: {stderr}");
        if args[0] == "screen" {
            // The CSV on stdout stays clean.
            assert!(!String::from_utf8_lossy(&r.stdout).contains("warning"), "{args:?}");
        }
    }
    // `--quiet` prints only errors.
    let r = Command::new(env!("CARGO_BIN_EXE_glaze")).args(["--quiet", "check", f]).output().unwrap();
    assert!(r.stderr.is_empty(), "{}", String::from_utf8_lossy(&r.stderr));
}
