//! The comparison page of `glaze compare` in a real browser: headless
//! Chromium (Debian's `chromium`, installed by `scripts/setup.sh`) opens
//! `compare.html` from disk, with its network switched off, and the test
//! checks that no console message was logged, that the DOM holds one
//! ranking row per layout and the plots of every wind case, and that the
//! screenshot is not blank. The screenshot is kept in
//! `out/test-screenshots/compare_page.png` for a person to look at.

mod common;

use common::*;
use std::path::{Path, PathBuf};
use std::process::Command;

/// Three layouts, two wind directions (two wind cases), two speeds.
const STUDY: &str = r#"[cases]
wind_speeds = [6.0, 10.0]
wind_directions = [90.0, 60.0]
layouts = ["none", "spacer", "masses"]
"#;

fn chromium() -> PathBuf {
    for p in ["/usr/bin/chromium", "/usr/bin/chromium-browser", "/usr/local/bin/chromium"] {
        if Path::new(p).exists() {
            return PathBuf::from(p);
        }
    }
    panic!("chromium is not installed: run scripts/setup.sh (it installs Debian's chromium)");
}

/// Runs headless Chromium on `page` with a fresh profile; returns its
/// standard output and the console lines of its log.
fn browse(page: &Path, extra: &[&str]) -> (String, Vec<String>) {
    let profile = tempfile::tempdir().expect("profile dir");
    let o = Command::new(chromium())
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--no-first-run",
            "--disable-quic",
            "--enable-logging=stderr",
            "--v=0",
        ])
        .arg(format!("--user-data-dir={}", profile.path().display()))
        .args(extra)
        .arg(format!("file://{}", page.display()))
        .output()
        .expect("run chromium");
    assert!(o.status.success(), "chromium failed:\n{}", text(&o));
    let console = String::from_utf8_lossy(&o.stderr)
        .lines()
        .filter(|l| l.contains(":CONSOLE"))
        .map(str::to_string)
        .collect();
    (String::from_utf8_lossy(&o.stdout).to_string(), console)
}

#[test]
fn the_comparison_page_loads_cleanly_in_headless_chromium() {
    let work = tempfile::tempdir().expect("temp dir");
    let study = write_study(work.path(), "page", "page_out", STUDY);
    let out = work.path().join("page_out");
    let o = glaze(&["sweep", study.to_str().unwrap(), "--jobs", "2"]);
    assert!(o.status.success(), "{}", text(&o));
    let o = glaze(&["compare", out.to_str().unwrap()]);
    assert!(o.status.success(), "{}", text(&o));
    let page = out.join("compare.html");

    // The console check sees errors: a page with one logs it.
    let bad = work.path().join("bad.html");
    std::fs::write(&bad, "<html><body><script>console.error('seen')</script></body></html>").expect("write");
    let (_, console) = browse(&bad, &["--dump-dom"]);
    assert!(console.iter().any(|l| l.contains("seen")), "the console check is blind: {console:?}");

    let (dom, console) = browse(&page, &["--dump-dom"]);
    assert!(console.is_empty(), "the page logged to the console: {console:?}");
    assert_eq!(dom.matches("<tr class=\"layout\">").count(), 3, "one ranking row per layout");
    let sections: Vec<&str> = dom.split("<section class=\"wind-case\">").skip(1).collect();
    assert_eq!(sections.len(), 2, "one section per wind case");
    for (s, dir) in sections.iter().zip(["90", "60"]) {
        assert!(s.contains(&format!("wind towards {dir}°")), "{s}");
        let plots = s.split("</section>").next().unwrap_or("").matches("<figure class=\"plot\"").count();
        assert!(plots >= 1, "wind case {dir}°: no plot");
        assert!(s.contains("id=\"compare_amplitude_base_d0"), "wind case {dir}°: no amplitude plot");
    }

    let shots = repo().join("out/test-screenshots");
    std::fs::create_dir_all(&shots).expect("screenshot folder");
    let shot = shots.join("compare_page.png");
    let _ = std::fs::remove_file(&shot);
    let (_, console) =
        browse(&page, &[&format!("--screenshot={}", shot.display()), "--window-size=1280,2400"]);
    assert!(console.is_empty(), "{console:?}");
    let decoder = png::Decoder::new(std::io::BufReader::new(std::fs::File::open(&shot).expect("screenshot")));
    let mut reader = decoder.read_info().expect("PNG header");
    let mut buf = vec![0; reader.output_buffer_size()];
    let info = reader.next_frame(&mut buf).expect("PNG data");
    let px = info.color_type.samples();
    let pixels: Vec<&[u8]> = buf[..info.buffer_size()].chunks(px).collect();
    let not_white = pixels.iter().filter(|p| p[..3].iter().any(|&c| c < 200)).count();
    let mut colours: Vec<[u8; 3]> = pixels.iter().map(|p| [p[0], p[1], p[2]]).collect();
    colours.sort_unstable();
    colours.dedup();
    assert!(
        not_white as f64 > 0.01 * pixels.len() as f64 && colours.len() > 16,
        "the screenshot looks blank: {not_white} dark pixels of {}, {} colours",
        pixels.len(),
        colours.len()
    );
    println!("screenshot of the comparison page: {}", shot.display());
}
