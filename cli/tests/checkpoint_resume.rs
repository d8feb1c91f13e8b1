//! Overnight runs that survive (issue 8): checkpoints and `--resume`, a
//! clean stop on SIGTERM, and a run that diverges. Each test runs the real
//! binary in its own processes; results files are compared bit for bit by
//! an independent reader (h5py and NumPy, `tests/python/h5_equal.py`) and
//! inspected by `tests/python/h5_summary.py`.
//!
//! Sections: the iced 350 m span of `examples/iced_span_galloping.toml`
//! (2.5 s of wall time for 160 s simulated), and for the divergence a
//! violently galloping invented coefficient table (lift slope −20 per rad)
//! in a 30 m/s wind, which drives the span to a twist rate of hundreds of
//! rad/s within seconds.

mod common;

use common::*;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

/// The iced span example for `duration` s, checkpointed every 2 simulated s.
fn span_input(dir: &Path, duration: f64) -> PathBuf {
    let aero = repo().join("examples/aero");
    let text = std::fs::read_to_string(repo().join("examples/iced_span_galloping.toml"))
        .expect("example")
        .replace("aero_table = \"aero/", &format!("aero_table = \"{}/", aero.display()))
        .replace("duration = 60.0", &format!("duration = {duration}"));
    let path = dir.join("span.toml");
    std::fs::write(&path, format!("{text}\n[dynamics.checkpoint]\nevery_simulated = 2.0\n"))
        .expect("write input");
    path
}

fn with_suffix(out: &Path, suffix: &str) -> PathBuf {
    let mut s = out.as_os_str().to_owned();
    s.push(suffix);
    PathBuf::from(s)
}

fn start_run(input: &Path, out: &Path) -> Child {
    Command::new(BIN)
        .args(["run", input.to_str().unwrap(), "--out", out.to_str().unwrap()])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start glaze run")
}

/// Waits until `path` exists (the run's first checkpoint), at most 60 s.
fn wait_for(path: &Path, child: &mut Child) {
    let start = Instant::now();
    while !path.exists() {
        assert!(child.try_wait().expect("poll").is_none(), "the run ended before {}", path.display());
        assert!(start.elapsed() < Duration::from_secs(60), "no {} after 60 s", path.display());
        std::thread::sleep(Duration::from_millis(2));
    }
}

/// A pseudo-random delay in [0, max_ms) ms from the clock (no seed to keep).
fn random_ms(max_ms: u64) -> u64 {
    let nanos =
        std::time::SystemTime::now().duration_since(std::time::UNIX_EPOCH).map_or(0, |d| d.subsec_nanos());
    u64::from(nanos) * 2_654_435_761 % max_ms.max(1)
}

fn summary(path: &Path) -> serde_json::Value {
    python("h5_summary.py", &[path])
}

fn resume(input: &Path, out: &Path) -> std::process::Output {
    glaze(&["run", input.to_str().unwrap(), "--out", out.to_str().unwrap(), "--resume"])
}

fn assert_equal_files(a: &Path, b: &Path) {
    let eq = python("h5_equal.py", &[a, b]);
    assert_eq!(eq["equal"], true, "{eq}");
    assert!(eq["datasets"].as_u64().unwrap() >= 30, "{eq}");
}

#[test]
fn sigkill_at_random_points_then_resume_gives_the_uninterrupted_file_bit_for_bit() {
    let dir = tempfile::tempdir().expect("temp dir");
    let input = span_input(dir.path(), 160.0);
    let reference = dir.path().join("reference.h5");
    let o = glaze(&["-q", "run", input.to_str().unwrap(), "--out", reference.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o));
    assert!(!with_suffix(&reference, ".checkpoint").exists(), "a finished run leaves no checkpoint");

    let out = dir.path().join("killed.h5");
    let (partial, checkpoint) = (with_suffix(&out, ".partial"), with_suffix(&out, ".checkpoint"));
    // Killed twice: the fresh run, then the resumed one; each at a random
    // moment after a checkpoint exists.
    let mut child = start_run(&input, &out);
    for round in 0..2 {
        wait_for(&checkpoint, &mut child);
        std::thread::sleep(Duration::from_millis(random_ms(800)));
        let still_running = child.try_wait().expect("poll").is_none();
        child.kill().expect("SIGKILL");
        let status = child.wait().expect("wait");
        assert!(still_running && status.code().is_none(), "round {round}: the run was not killed mid-way");
        assert!(!out.exists() && partial.exists() && checkpoint.exists(), "round {round}");
        if round == 0 {
            child = Command::new(BIN)
                .args(["run", input.to_str().unwrap(), "--out", out.to_str().unwrap(), "--resume"])
                .stdout(Stdio::piped())
                .stderr(Stdio::piped())
                .spawn()
                .expect("resume");
            // Wait for the resumed run's own next checkpoint.
            let before = std::fs::metadata(&checkpoint).and_then(|m| m.modified()).expect("mtime");
            let start = Instant::now();
            while std::fs::metadata(&checkpoint).and_then(|m| m.modified()).is_ok_and(|m| m == before) {
                assert!(child.try_wait().expect("poll").is_none(), "the resumed run ended early");
                assert!(start.elapsed() < Duration::from_secs(60));
                std::thread::sleep(Duration::from_millis(2));
            }
        }
    }
    let o = resume(&input, &out);
    assert!(o.status.success(), "{}", text(&o));
    assert!(out.exists() && !partial.exists() && !checkpoint.exists(), "{}", text(&o));
    assert_equal_files(&reference, &out);
    let s = summary(&out);
    assert_eq!((s["complete"].as_i64(), s["records"].as_i64()), (Some(1), Some(3201)), "{s}");
}

#[test]
fn sigterm_keeps_an_incomplete_file_and_a_checkpoint_post_refuses_it_and_resume_finishes_it() {
    let dir = tempfile::tempdir().expect("temp dir");
    let input = span_input(dir.path(), 100.0);
    let reference = dir.path().join("reference.h5");
    let o = glaze(&["-q", "run", input.to_str().unwrap(), "--out", reference.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o));

    let out = dir.path().join("stopped.h5");
    let (partial, checkpoint) = (with_suffix(&out, ".partial"), with_suffix(&out, ".checkpoint"));
    let mut child = start_run(&input, &out);
    wait_for(&checkpoint, &mut child);
    std::thread::sleep(Duration::from_millis(random_ms(300)));
    let sent = Command::new("kill").args(["-TERM", &child.id().to_string()]).status().expect("kill");
    assert!(sent.success());
    let o = child.wait_with_output().expect("wait");
    assert_eq!(o.status.code(), Some(130), "{}", text(&o));
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert!(stderr.contains("interrupted at t =") && stderr.contains("--resume"), "{stderr}");
    assert!(!out.exists() && partial.exists() && checkpoint.exists());

    // Readable, marked incomplete, every record finite.
    let s = summary(&partial);
    assert_eq!(s["complete"], 0, "{s}");
    assert!(s["all_finite"].as_bool().unwrap() && s["records"].as_i64().unwrap() > 40, "{s}");
    assert!(s["last_time"].as_f64().unwrap() < 100.0, "{s}");

    // `glaze post` refuses it, says why and what to do; accepts it when told.
    let post_dir = dir.path().join("post");
    let o = glaze(&["post", partial.to_str().unwrap(), "--out", post_dir.to_str().unwrap(), "--no-xdmf"]);
    assert_eq!(o.status.code(), Some(5), "{}", text(&o));
    let t = text(&o);
    assert!(t.contains("incomplete") && t.contains("--allow-incomplete"), "{t}");
    assert!(!post_dir.join("report.json").exists());
    let o = glaze(&[
        "-q",
        "post",
        partial.to_str().unwrap(),
        "--out",
        post_dir.to_str().unwrap(),
        "--no-xdmf",
        "--allow-incomplete",
    ]);
    assert!(o.status.success(), "{}", text(&o));
    assert!(post_dir.join("report.json").is_file());

    let o = resume(&input, &out);
    assert!(o.status.success(), "{}", text(&o));
    assert!(out.exists() && !partial.exists() && !checkpoint.exists());
    assert_equal_files(&reference, &out);
}

#[test]
fn resume_refuses_without_a_checkpoint_another_input_or_a_missing_file() {
    let dir = tempfile::tempdir().expect("temp dir");
    let input = span_input(dir.path(), 100.0);
    let out = dir.path().join("r.h5");
    // Nothing to resume.
    let o = resume(&input, &out);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("no interrupted run of this output"), "{}", text(&o));

    let mut child = start_run(&input, &out);
    wait_for(&with_suffix(&out, ".checkpoint"), &mut child);
    Command::new("kill").args(["-TERM", &child.id().to_string()]).status().expect("kill");
    assert_eq!(child.wait().expect("wait").code(), Some(130));

    // The checkpoint gone: said plainly, the partial file stays.
    let cp = with_suffix(&out, ".checkpoint");
    std::fs::rename(&cp, dir.path().join("saved.checkpoint")).unwrap();
    let o = resume(&input, &out);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("no checkpoint"), "{}", text(&o));
    assert!(with_suffix(&out, ".partial").exists());
    std::fs::rename(dir.path().join("saved.checkpoint"), &cp).unwrap();

    // Another input: the checkpoint is refused and both files stay.
    let other = dir.path().join("other.toml");
    let changed = std::fs::read_to_string(&input).unwrap().replace("speed = 8.0", "speed = 8.5");
    std::fs::write(&other, changed).unwrap();
    let o = resume(&other, &out);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("another input"), "{}", text(&o));
    assert!(with_suffix(&out, ".partial").exists() && with_suffix(&out, ".checkpoint").exists());

    // The partial file gone: said plainly.
    std::fs::rename(with_suffix(&out, ".partial"), dir.path().join("moved.h5")).unwrap();
    let o = resume(&input, &out);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("the file is missing"), "{}", text(&o));
    assert!(!text(&o).contains("panicked"));

    // A finished run: nothing to resume.
    let done = dir.path().join("done.h5");
    let o = glaze(&["-q", "run", input.to_str().unwrap(), "--out", done.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o));
    let o = resume(&input, &done);
    assert_eq!(o.status.code(), Some(2), "{}", text(&o));
    assert!(text(&o).contains("is complete already"), "{}", text(&o));
}

/// The violent invented table (lift slope −20 per rad, no moment) beside
/// `dir`'s inputs.
fn violent_table(dir: &Path) -> PathBuf {
    let mut rows = vec![
        "# invented periodic table for a divergence test: violent galloping".to_string(),
        "# reference_diameter = 0.0531".into(),
        "alpha_deg,cd,cl,cm".into(),
    ];
    for a in (-180..=180).step_by(5) {
        let r = f64::from(a).to_radians();
        rows.push(format!("{a},1.0,{:.6},0.0", -20.0 * r.sin()));
    }
    let path = dir.join("violent.csv");
    std::fs::write(&path, rows.join("\n") + "\n").expect("write table");
    path
}

#[test]
fn a_diverging_run_ends_with_the_report_exit_8_and_an_incomplete_finite_file() {
    let dir = tempfile::tempdir().expect("temp dir");
    let table = violent_table(dir.path());
    let aero = repo().join("examples/aero");
    let text_in = std::fs::read_to_string(repo().join("examples/iced_span_galloping.toml"))
        .unwrap()
        .replace("aero_table = \"aero/crescent_ice.csv\"", &format!("aero_table = \"{}\"", table.display()))
        .replace("aero_table = \"aero/", &format!("aero_table = \"{}/", aero.display()))
        .replace("orientation = -30.0", "orientation = 0.0")
        .replace("speed = 8.0", "speed = 30.0")
        .replace("duration = 60.0", "duration = 20.0\nwind_ramp = 1.0");
    let input = dir.path().join("diverge.toml");
    std::fs::write(&input, text_in).unwrap();
    let out = dir.path().join("d.h5");
    let o = Command::new(BIN)
        .args(["run", input.to_str().unwrap(), "--out", out.to_str().unwrap()])
        .env("GLAZE_LOG", "error")
        .output()
        .expect("run");
    let t = text(&o);
    assert_eq!(o.status.code(), Some(8), "{t}");
    assert!(!t.contains("panicked"), "{t}");
    for needle in [
        "diverged: the last converged state is at t = ",
        "worst DOF: equation",
        " of node ",
        "span 1, chainage ",
        "largest force change since the last record: element",
        "suggestion: try a smaller [dynamics] time_step",
        "coefficient tables",
        "d.h5.partial (marked incomplete)",
    ] {
        assert!(t.contains(needle), "`{needle}` not in:\n{t}");
    }
    // Nothing at the target; the partial file holds finite records only, up
    // to the divergence, and the last converged state.
    assert!(!out.exists() && !with_suffix(&out, ".checkpoint").exists());
    let s = summary(&with_suffix(&out, ".partial"));
    assert_eq!(s["complete"], 0, "{s}");
    assert!(s["all_finite"].as_bool().unwrap(), "{s}");
    let (last, div) = (s["last_time"].as_f64().unwrap(), &s["divergence"]);
    assert!(last > 0.5 && last < 20.0, "{s}");
    let t_div = div["time"].as_f64().unwrap();
    assert!(div["finite"].as_bool().unwrap() && t_div >= last && t_div < last + 0.05, "{s}");
    assert!(div["report"].as_str().unwrap().contains("worst DOF"), "{s}");
}

#[test]
fn a_sweep_records_the_diverging_case_as_failed_and_finishes_the_others() {
    let dir = tempfile::tempdir().expect("temp dir");
    let table = violent_table(dir.path());
    let base = std::fs::read_to_string(repo().join("tests/data/two_phase_span.toml"))
        .unwrap()
        .replace(
            "ice = { thickness = 0.01 }",
            &format!("ice = {{ thickness = 0.01, aero_table = \"{}\", orientation = 0.0 }}", table.display()),
        )
        .replace("duration = 4.0", "duration = 6.0\nwind_ramp = 1.0");
    let base_path = dir.path().join("base.toml");
    std::fs::write(&base_path, base).unwrap();
    let study = dir.path().join("study.toml");
    std::fs::write(
        &study,
        format!(
            "[study]\nname = \"divergence\"\nbase = \"{}\"\noutput = \"out\"\n\n[cases]\nwind_speeds = [6.0, 30.0]\nlayouts = [\"none\", \"masses\"]\n",
            base_path.display()
        ),
    )
    .unwrap();
    let o = Command::new(BIN)
        .args(["sweep", study.to_str().unwrap(), "--jobs", "2"])
        .env("GLAZE_LOG", "error")
        .output()
        .unwrap();
    let t = text(&o);
    assert_eq!(o.status.code(), Some(6), "some cases failed: {t}");
    assert!(!t.contains("panicked"), "{t}");
    let out = dir.path().join("out");
    let ids = case_ids(&out);
    assert_eq!(ids.len(), 4, "{ids:?}");
    let complete = complete_ids(&out);
    assert_eq!(complete.len(), 2, "the 6 m/s cases finish: {complete:?}\n{t}");
    for id in &ids {
        let case = out.join("cases").join(id);
        if complete.contains(id) {
            assert!(case.join("result.h5").is_file() && !case.join("failed.json").exists(), "{id}");
            continue;
        }
        let failed: serde_json::Value =
            serde_json::from_str(&std::fs::read_to_string(case.join("failed.json")).expect("failed.json"))
                .unwrap();
        assert_eq!(failed["stage"], "diverged", "{failed}");
        let m = failed["message"].as_str().unwrap();
        assert!(m.contains("worst DOF") && m.contains("suggestion") && m.contains("t = "), "{m}");
        assert!(!case.join("result.h5").exists() && case.join("result.h5.partial").is_file(), "{id}");
    }
    // `glaze compare` names both as failed.
    let o = glaze(&["compare", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(6), "{}", text(&o));
    let md = std::fs::read_to_string(out.join("compare.md")).expect("compare.md");
    assert_eq!(md.matches("failed: diverged").count(), 2, "{md}");
}
