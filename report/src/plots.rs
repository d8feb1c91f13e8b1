//! Plots of a report, each as PNG and SVG in the output folder:
//!
//! - `orbits`: per (route span, phase) the steady orbit of the station with
//!   the largest vertical motion (across against vertical displacement),
//!   small multiples with an equal scale on both axes of each panel;
//! - `amplitude`: vertical displacement of that station against time;
//! - `clearance`: least phase-to-phase distance per pair, and the lowest
//!   clearance above ground, against time, with the required values dashed
//!   (skipped without pairs and ground series);
//! - `tensions`: the largest conductor tension per route span and phase;
//! - `loads`: static and peak force magnitude at every support.
//!
//! Each file is drawn in memory, written under a `.partial` name and renamed
//! when whole. Non-finite values are left out; a chart without any finite
//! value says so instead of drawing axes.

use crate::report::Report;
use crate::series::Series;
use crate::ReportError;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::path::{Path, PathBuf};

/// Size of one line or bar chart, pixels.
const CHART: (u32, u32) = (1000, 640);
/// Size of one orbit panel, pixels.
const PANEL: u32 = 360;
/// Panels at most in the orbit grid (the rest are left out, with a note).
const MAX_PANELS: usize = 64;
/// Points kept at most per line (min/max per bucket beyond it).
const MAX_POINTS: usize = 4000;
/// Smallest extent of an axis, in its units (a flat signal still gets axes).
const MIN_EXTENT: f64 = 1e-3;
const FONT: &str = "sans-serif";
/// Height of an orbit panel's title strip, pixels.
const PANEL_TITLE: u32 = 28;
const PANEL_MARGIN: u32 = 10;
const PANEL_X_LABELS: u32 = 40;
const PANEL_Y_LABELS: u32 = 60;

/// One orbit panel.
struct Panel {
    title: String,
    points: Vec<(f64, f64)>,
}

/// One line of a time chart.
struct Line {
    label: String,
    points: Vec<(f64, f64)>,
    dashed: bool,
}

enum Chart {
    Orbits { panels: Vec<Panel>, left_out: usize },
    Lines { title: String, x_desc: &'static str, y_desc: &'static str, lines: Vec<Line> },
    Bars { title: String, labels: Vec<String>, static_kn: Vec<f64>, peak_kn: Vec<f64> },
}

type Drawn = Result<(), String>;

fn err<E: std::fmt::Display>(e: E) -> String {
    e.to_string()
}

/// Finite range of `v`, widened to at least [`MIN_EXTENT`] and by 5 % each side.
fn range(v: impl Iterator<Item = f64>) -> Option<(f64, f64)> {
    let (lo, hi) = v
        .filter(|x| x.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), x| (l.min(x), h.max(x)));
    if lo > hi {
        return None;
    }
    let mid = 0.5 * (lo + hi);
    let half = (0.5 * (hi - lo)).max(0.5 * MIN_EXTENT.max(1e-9 * mid.abs()));
    let half = half * 1.05;
    Some((mid - half, mid + half))
}

/// Finite points only, thinned to about [`MAX_POINTS`] keeping each bucket's extremes.
fn thin(points: impl Iterator<Item = (f64, f64)>) -> Vec<(f64, f64)> {
    let p: Vec<(f64, f64)> = points.filter(|(x, y)| x.is_finite() && y.is_finite()).collect();
    if p.len() <= MAX_POINTS {
        return p;
    }
    let per = p.len().div_ceil(MAX_POINTS / 2);
    let mut out = Vec::with_capacity(MAX_POINTS + 2);
    for bucket in p.chunks(per) {
        let lo = bucket.iter().enumerate().min_by(|a, b| a.1 .1.total_cmp(&b.1 .1));
        let hi = bucket.iter().enumerate().max_by(|a, b| a.1 .1.total_cmp(&b.1 .1));
        if let (Some((i, a)), Some((j, b))) = (lo, hi) {
            if i <= j {
                out.push(*a);
                if i != j {
                    out.push(*b);
                }
            } else {
                out.push(*b);
                out.push(*a);
            }
        }
    }
    out
}

fn peak_to_peak(v: impl Iterator<Item = f64>) -> f64 {
    let (lo, hi) = v
        .filter(|x| x.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), x| (l.min(x), h.max(x)));
    if hi >= lo {
        hi - lo
    } else {
        0.0
    }
}

fn norm(v: [f64; 3]) -> f64 {
    (v[0] * v[0] + v[1] * v[1] + v[2] * v[2]).sqrt()
}

/// Text of `size` pixels anchored at its centre.
fn centred(size: u32) -> TextStyle<'static> {
    TextStyle::from((FONT, size)).pos(Pos::new(HPos::Center, VPos::Center))
}

/// Draws `message` under `title` in place of a chart.
fn note<DB: DrawingBackend>(root: &DrawingArea<DB, Shift>, title: &str, message: &str) -> Drawn {
    let area = root.titled(title, (FONT, 24)).map_err(err)?;
    let (w, h) = area.dim_in_pixel();
    let style = centred(18);
    area.draw_text(message, &style, (w as i32 / 2, h as i32 / 2)).map_err(err)
}

impl Chart {
    fn size(&self) -> (u32, u32) {
        match self {
            Chart::Orbits { panels, .. } => {
                let (rows, cols) = grid(panels.len());
                (cols as u32 * PANEL, rows as u32 * PANEL + PANEL_TITLE + 8)
            }
            _ => CHART,
        }
    }

    fn draw<DB: DrawingBackend>(&self, root: &DrawingArea<DB, Shift>) -> Drawn {
        root.fill(&WHITE).map_err(err)?;
        match self {
            Chart::Orbits { panels, left_out } => draw_orbits(root, panels, *left_out),
            Chart::Lines { title, x_desc, y_desc, lines } => draw_lines(root, title, x_desc, y_desc, lines),
            Chart::Bars { title, labels, static_kn, peak_kn } => {
                draw_bars(root, title, labels, static_kn, peak_kn)
            }
        }?;
        root.present().map_err(err)
    }
}

/// Rows and columns of a grid of `n` panels (at least one of each).
fn grid(n: usize) -> (usize, usize) {
    let n = n.max(1);
    let mut cols = 1;
    while cols * cols < n {
        cols += 1;
    }
    (n.div_ceil(cols), cols)
}

fn draw_orbits<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    panels: &[Panel],
    left_out: usize,
) -> Drawn {
    let title = if left_out > 0 {
        format!("Steady orbits of the worst stations ({left_out} more not shown)")
    } else {
        "Steady orbits of the worst stations".to_string()
    };
    if panels.is_empty() {
        return note(root, &title, "no spans in the results file");
    }
    let area = root.titled(&title, (FONT, 22)).map_err(err)?;
    let (rows, cols) = grid(panels.len());
    for (panel, cell) in panels.iter().zip(area.split_evenly((rows, cols))) {
        let (w, h) = cell.dim_in_pixel();
        let (head, body) = cell.split_vertically(PANEL_TITLE);
        let style = centred(18);
        head.draw_text(&panel.title, &style, (w as i32 / 2, PANEL_TITLE as i32 / 2)).map_err(err)?;
        let (Some(ry), Some(rz)) =
            (range(panel.points.iter().map(|p| p.0)), range(panel.points.iter().map(|p| p.1)))
        else {
            let (bw, bh) = body.dim_in_pixel();
            let style = centred(15);
            body.draw_text("no finite motion recorded", &style, (bw as i32 / 2, bh as i32 / 2))
                .map_err(err)?;
            continue;
        };
        // Equal scale: metres per pixel alike on both axes of the plot area.
        let pw = f64::from(w.saturating_sub(2 * PANEL_MARGIN + PANEL_Y_LABELS).max(1));
        let ph = f64::from(h.saturating_sub(PANEL_TITLE + 2 * PANEL_MARGIN + PANEL_X_LABELS).max(1));
        let per_px = ((ry.1 - ry.0) / pw).max((rz.1 - rz.0) / ph);
        let (cy, cz) = (0.5 * (ry.0 + ry.1), 0.5 * (rz.0 + rz.1));
        let (hy, hz) = (0.5 * per_px * pw, 0.5 * per_px * ph);
        let mut chart = ChartBuilder::on(&body)
            .margin(PANEL_MARGIN)
            .x_label_area_size(PANEL_X_LABELS)
            .y_label_area_size(PANEL_Y_LABELS)
            .build_cartesian_2d(cy - hy..cy + hy, cz - hz..cz + hz)
            .map_err(err)?;
        chart
            .configure_mesh()
            .x_desc("across y (m)")
            .y_desc("vertical z (m)")
            .x_labels(5)
            .y_labels(5)
            .label_style((FONT, 12))
            .axis_desc_style((FONT, 13))
            .draw()
            .map_err(err)?;
        chart
            .draw_series(LineSeries::new(thin(panel.points.iter().copied()), BLUE.stroke_width(1)))
            .map_err(err)?;
    }
    Ok(())
}

fn draw_lines<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    title: &str,
    x_desc: &str,
    y_desc: &str,
    lines: &[Line],
) -> Drawn {
    let (Some(rx), Some(ry)) = (
        range(lines.iter().flat_map(|l| l.points.iter().map(|p| p.0))),
        range(lines.iter().flat_map(|l| l.points.iter().map(|p| p.1))),
    ) else {
        return note(root, title, "no finite values to plot");
    };
    let mut chart = ChartBuilder::on(root)
        .caption(title, (FONT, 24))
        .margin(15)
        .x_label_area_size(50)
        .y_label_area_size(80)
        .build_cartesian_2d(rx.0..rx.1, ry.0..ry.1)
        .map_err(err)?;
    chart
        .configure_mesh()
        .x_desc(x_desc)
        .y_desc(y_desc)
        .label_style((FONT, 14))
        .axis_desc_style((FONT, 16))
        .draw()
        .map_err(err)?;
    let (mut solid, mut dashed) = (0, 0);
    for line in lines {
        if line.points.is_empty() {
            continue;
        }
        let color: RGBColor = if line.dashed {
            dashed += 1;
            if dashed == 1 {
                RED
            } else {
                BLACK
            }
        } else {
            solid += 1;
            let c = Palette99::pick(solid - 1).to_rgba();
            RGBColor(c.0, c.1, c.2)
        };
        let style = color.stroke_width(2);
        let drawn = if line.dashed {
            chart
                .draw_series(DashedLineSeries::new(line.points.iter().copied(), 10, 6, style))
                .map_err(err)?
        } else {
            chart.draw_series(LineSeries::new(line.points.iter().copied(), style)).map_err(err)?
        };
        drawn
            .label(line.label.as_str())
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 24, y)], color.stroke_width(2)));
    }
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .label_font((FONT, 14))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()
        .map_err(err)
}

fn draw_bars<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    title: &str,
    labels: &[String],
    static_kn: &[f64],
    peak_kn: &[f64],
) -> Drawn {
    let n = labels.len().min(static_kn.len()).min(peak_kn.len());
    let Some(ry) = range(static_kn.iter().chain(peak_kn).copied().chain([0.0])) else {
        return note(root, title, "no supports in the results file");
    };
    if n == 0 {
        return note(root, title, "no supports in the results file");
    }
    // Headroom for the legend.
    let top = 1.2 * ry.1.max(MIN_EXTENT);
    let bottom = ry.0.min(0.0);
    let mut chart = ChartBuilder::on(root)
        .caption(title, (FONT, 24))
        .margin(15)
        .x_label_area_size(60)
        .y_label_area_size(80)
        // A segmented range holds its end: n - 1 for n supports.
        .build_cartesian_2d((0..n as i32 - 1).into_segmented(), bottom..top)
        .map_err(err)?;
    let label = |v: &SegmentValue<i32>| match v {
        SegmentValue::CenterOf(k) => {
            usize::try_from(*k).ok().and_then(|k| labels.get(k)).cloned().unwrap_or_default()
        }
        _ => String::new(),
    };
    chart
        .configure_mesh()
        .disable_x_mesh()
        .x_labels(n.max(1))
        .x_label_formatter(&label)
        .x_desc("support")
        .y_desc("force magnitude (kN)")
        .label_style((FONT, 13))
        .axis_desc_style((FONT, 16))
        .draw()
        .map_err(err)?;
    let fin = |v: f64| if v.is_finite() { v } else { 0.0 };
    let stat_color = RGBColor(120, 150, 200);
    let peak_color = RGBColor(200, 80, 60);
    chart
        .draw_series((0..n).map(|k| {
            let k = k as i32;
            let mut bar = Rectangle::new(
                [(SegmentValue::Exact(k), 0.0), (SegmentValue::CenterOf(k), fin(static_kn[k as usize]))],
                stat_color.filled(),
            );
            bar.set_margin(0, 0, 6, 0);
            bar
        }))
        .map_err(err)?
        .label("static")
        .legend(move |(x, y)| Rectangle::new([(x, y - 6), (x + 16, y + 6)], stat_color.filled()));
    chart
        .draw_series((0..n).map(|k| {
            let k = k as i32;
            let mut bar = Rectangle::new(
                [(SegmentValue::CenterOf(k), 0.0), (SegmentValue::Exact(k + 1), fin(peak_kn[k as usize]))],
                peak_color.filled(),
            );
            bar.set_margin(0, 0, 0, 6);
            bar
        }))
        .map_err(err)?
        .label("peak (steady part)")
        .legend(move |(x, y)| Rectangle::new([(x, y - 6), (x + 16, y + 6)], peak_color.filled()));
    chart
        .configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .label_font((FONT, 14))
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()
        .map_err(err)
}

/// Name of a phase, as the report spells it.
fn phase_name(report: &Report, series: &Series, p: Option<usize>) -> String {
    series
        .spans
        .iter()
        .zip(&report.spans)
        .find(|(g, _)| g.phase == p)
        .map(|(_, e)| e.phase.clone())
        .unwrap_or_else(|| match p {
            Some(p) => format!("phase {p}"),
            None => "conductor".into(),
        })
}

fn span_title(report: &Report, series: &Series, k: usize) -> String {
    let g = &series.spans[k];
    let phase = report.spans.get(k).map_or_else(|| phase_name(report, series, g.phase), |e| e.phase.clone());
    format!("span {} phase {}", g.route_span + 1, phase)
}

/// Index of the station of span `k` with the largest vertical peak-to-peak from record `from` on.
fn worst_station(series: &Series, k: usize, from: usize) -> usize {
    let g = &series.spans[k];
    let stations = g.z.first().map_or(0, Vec::len);
    (0..stations)
        .map(|i| (i, peak_to_peak(g.z.iter().skip(from).filter_map(|z| z.get(i).copied()))))
        .max_by(|a, b| a.1.total_cmp(&b.1))
        .map_or(0, |(i, _)| i)
}

fn charts(report: &Report, series: &Series) -> Vec<(&'static str, Chart)> {
    let t = &series.time;
    let from = t.iter().position(|&x| x >= report.steady_from_s).unwrap_or(0);
    let worst: Vec<usize> = (0..series.spans.len()).map(|k| worst_station(series, k, from)).collect();
    let mut out = Vec::new();

    let panels: Vec<Panel> = (0..series.spans.len())
        .take(MAX_PANELS)
        .map(|k| {
            let g = &series.spans[k];
            let w = worst[k];
            let points =
                g.y.iter()
                    .zip(&g.z)
                    .skip(from)
                    .filter_map(|(y, z)| Some((*y.get(w)?, *z.get(w)?)))
                    .filter(|(y, z)| y.is_finite() && z.is_finite())
                    .collect();
            Panel { title: span_title(report, series, k), points }
        })
        .collect();
    out.push(("orbits", Chart::Orbits { panels, left_out: series.spans.len().saturating_sub(MAX_PANELS) }));

    let lines = (0..series.spans.len())
        .map(|k| {
            let w = worst[k];
            let points = thin(t.iter().zip(&series.spans[k].z).filter_map(|(&t, z)| Some((t, *z.get(w)?))));
            Line { label: span_title(report, series, k), points, dashed: false }
        })
        .collect();
    out.push((
        "amplitude",
        Chart::Lines {
            title: "Vertical displacement of the worst station".into(),
            x_desc: "time (s)",
            y_desc: "vertical displacement (m)",
            lines,
        },
    ));

    if !series.pairs.is_empty() || !series.ground.is_empty() {
        let mut lines: Vec<Line> = series
            .pairs
            .iter()
            .map(|((i, j), a)| Line {
                label: format!(
                    "{} - {}",
                    phase_name(report, series, Some(*i)),
                    phase_name(report, series, Some(*j))
                ),
                points: thin(t.iter().zip(a).map(|(&t, a)| (t, a.distance))),
                dashed: false,
            })
            .collect();
        lines.extend(series.ground.iter().map(|(p, a)| Line {
            label: format!("{} - ground", phase_name(report, series, Some(*p))),
            points: thin(t.iter().zip(a).map(|(&t, a)| (t, a.distance))),
            dashed: false,
        }));
        let (t0, t1) = (t.first().copied().unwrap_or(0.0), t.last().copied().unwrap_or(0.0));
        let required = |label: &str, v: Option<f64>| {
            v.filter(|v| v.is_finite()).map(|v| Line {
                label: label.into(),
                points: thin([(t0, v), (t1, v)].into_iter()),
                dashed: true,
            })
        };
        if !series.pairs.is_empty() {
            lines.extend(required("required phase to phase", report.clearance.required_phase_to_phase_m));
        }
        if !series.ground.is_empty() {
            lines.extend(required("required phase to ground", report.clearance.required_phase_to_ground_m));
        }
        out.push((
            "clearance",
            Chart::Lines {
                title: "Least phase-to-phase distance and clearance to ground".into(),
                x_desc: "time (s)",
                y_desc: "distance (m)",
                lines,
            },
        ));
    }

    // Largest tension per (route span, phase), over the subconductors.
    let mut groups: Vec<((usize, String), Vec<f64>)> = Vec::new();
    for (c, f) in report.conductors.iter().zip(&series.span_tension) {
        let key = (c.span, c.phase.clone());
        match groups.iter_mut().find(|(k, _)| *k == key) {
            Some((_, m)) => {
                for (a, &b) in m.iter_mut().zip(f) {
                    if b.is_finite() && (a.is_nan() || b > *a) {
                        *a = b;
                    }
                }
            }
            None => groups.push((key, f.clone())),
        }
    }
    let lines = groups
        .into_iter()
        .map(|((span, phase), f)| Line {
            label: format!("span {span} phase {phase}"),
            points: thin(t.iter().zip(&f).map(|(&t, &f)| (t, f / 1000.0))),
            dashed: false,
        })
        .collect();
    out.push((
        "tensions",
        Chart::Lines {
            title: "Largest conductor tension per span and phase".into(),
            x_desc: "time (s)",
            y_desc: "tension (kN)",
            lines,
        },
    ));

    out.push((
        "loads",
        Chart::Bars {
            title: "Support forces: static and peak magnitude".into(),
            labels: report.supports.iter().map(|s| s.label.clone()).collect(),
            static_kn: report.supports.iter().map(|s| norm(s.static_n) / 1000.0).collect(),
            peak_kn: report.supports.iter().map(|s| s.peak_magnitude_n / 1000.0).collect(),
        },
    ));
    out
}

fn svg(chart: &Chart) -> Result<String, String> {
    let mut text = String::new();
    {
        let root = SVGBackend::with_string(&mut text, chart.size()).into_drawing_area();
        chart.draw(&root)?;
    }
    Ok(text)
}

fn png(chart: &Chart) -> Result<Vec<u8>, String> {
    let (w, h) = chart.size();
    let mut rgb = vec![255u8; w as usize * h as usize * 3];
    {
        let root = BitMapBackend::with_buffer(&mut rgb, (w, h)).into_drawing_area();
        chart.draw(&root)?;
    }
    let mut bytes = Vec::new();
    let mut encoder = png::Encoder::new(&mut bytes, w, h);
    encoder.set_color(png::ColorType::Rgb);
    encoder.set_depth(png::BitDepth::Eight);
    encoder.set_compression(png::Compression::Best);
    encoder.set_adaptive_filter(png::AdaptiveFilterType::Adaptive);
    let mut writer = encoder.write_header().map_err(err)?;
    writer.write_image_data(&rgb).map_err(err)?;
    writer.finish().map_err(err)?;
    Ok(bytes)
}

fn write_atomic(path: &Path, bytes: &[u8]) -> Result<(), ReportError> {
    let partial = PathBuf::from(format!("{}.partial", path.display()));
    let fail = |e: std::io::Error| {
        let _ = std::fs::remove_file(&partial);
        ReportError::Output { path: path.to_path_buf(), message: e.to_string() }
    };
    std::fs::write(&partial, bytes).map_err(fail)?;
    std::fs::rename(&partial, path).map_err(fail)
}

/// Draws the plots of `report` and `series` (see the module docs) into
/// `dir` as `NAME.png` and `NAME.svg`, and returns the paths written.
///
/// # Errors
/// [`ReportError::Output`] for a chart that cannot be drawn (for example
/// no font for the PNG text) or a file that cannot be written; no
/// `.partial` file is left behind.
pub fn write_plots(report: &Report, series: &Series, dir: &Path) -> Result<Vec<PathBuf>, ReportError> {
    let mut written = Vec::new();
    for (name, chart) in charts(report, series) {
        let svg_path = dir.join(format!("{name}.svg"));
        let text = svg(&chart).map_err(|message| ReportError::Output { path: svg_path.clone(), message })?;
        write_atomic(&svg_path, text.as_bytes())?;
        written.push(svg_path);
        let png_path = dir.join(format!("{name}.png"));
        let bytes = png(&chart).map_err(|message| ReportError::Output { path: png_path.clone(), message })?;
        write_atomic(&png_path, &bytes)?;
        written.push(png_path);
    }
    Ok(written)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ranges_survive_empty_nan_and_flat_data() {
        assert_eq!(range([].into_iter()), None);
        assert_eq!(range([f64::NAN, f64::INFINITY].into_iter()), None);
        let (lo, hi) = range([2.0, 2.0].into_iter()).unwrap();
        assert!(lo < 2.0 && hi > 2.0 && hi - lo >= MIN_EXTENT);
        assert_eq!(thin([(0.0, f64::NAN), (1.0, 1.0)].into_iter()), vec![(1.0, 1.0)]);
    }

    #[test]
    fn thinning_keeps_the_extremes() {
        let p: Vec<(f64, f64)> = (0..100_000).map(|i| (i as f64, ((i * 7919) % 1000) as f64)).collect();
        let q = thin(p.into_iter());
        assert!(q.len() <= MAX_POINTS + 2);
        assert_eq!(q.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max), 999.0);
        assert_eq!(q.iter().map(|p| p.1).fold(f64::INFINITY, f64::min), 0.0);
        assert!(q.windows(2).all(|w| w[0].0 < w[1].0));
    }

    #[test]
    fn grids_hold_every_panel() {
        for n in 0..70 {
            let (r, c) = grid(n);
            assert!(r * c >= n.max(1) && c <= r + 1);
        }
    }

    #[test]
    fn charts_without_finite_data_draw_a_note() {
        let empty = Chart::Lines { title: "t".into(), x_desc: "time (s)", y_desc: "m", lines: vec![] };
        let nan = Chart::Lines {
            title: "t".into(),
            x_desc: "time (s)",
            y_desc: "m",
            lines: vec![Line { label: "a".into(), points: vec![], dashed: false }],
        };
        let bars = Chart::Bars { title: "b".into(), labels: vec![], static_kn: vec![], peak_kn: vec![] };
        let orbits = Chart::Orbits {
            panels: vec![Panel { title: "span 1 phase A".into(), points: vec![(1.0, 1.0)] }],
            left_out: 0,
        };
        for c in [empty, nan, bars, orbits] {
            let s = svg(&c).unwrap();
            assert!(s.contains("<svg"));
        }
    }

    /// Runs the galloping example for 10 s into `dir` and returns its results file.
    fn run_example(dir: &Path) -> PathBuf {
        use glaze_engine::analysis::dynamic_stage::run_dynamic;
        use glaze_engine::results::ResultsWriter;
        use glaze_engine::{input, ElementRegistry};
        use std::sync::atomic::AtomicBool;

        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples/iced_span_galloping.toml");
        let text = std::fs::read_to_string(&path).unwrap();
        let text = text.replace("duration = 60.0", "duration = 10.0");
        assert!(text.contains("duration = 10.0"), "the example's duration line changed");
        let text = text + "\n[post]\ntransient = 4.0\nclearance = { phase_to_ground = 8.0 }\n";
        let registry = ElementRegistry::with_builtin();
        let spec = input::load_str(&path, &text, &registry).unwrap();
        let writer = ResultsWriter::create(&dir.join("gallop.h5"), &text).unwrap();
        run_dynamic(&spec, &registry, &writer, &AtomicBool::new(false), &mut |_| {}).unwrap();
        writer.finish(0.0).unwrap()
    }

    fn report_and_series(h5: &Path) -> (Report, Series) {
        let file = crate::ResultsFile::open(h5, false).unwrap();
        let post = glaze_engine::input::post::load_post(h5, &file.input_toml).unwrap();
        let series = crate::series::read_series(&file).unwrap();
        let report = crate::build_report(&file.model, &series, &post, String::new(), true).unwrap();
        (report, series)
    }

    fn no_partial(dir: &Path) {
        let partial: Vec<_> = std::fs::read_dir(dir)
            .unwrap()
            .filter_map(|e| e.ok())
            .filter(|e| e.file_name().to_string_lossy().ends_with(".partial"))
            .collect();
        assert!(partial.is_empty(), "left behind: {partial:?}");
    }

    /// The clearance chart with a pair, a ground series, gaps (no approach,
    /// NaN) and both required values; then every chart on degenerate data
    /// (no records, NaN, flat, one support, none) draws without panicking.
    #[test]
    fn clearance_and_degenerate_data() {
        use crate::series::Approach;
        let dir = tempfile::tempdir().unwrap();
        let h5 = run_example(dir.path());
        let (mut report, mut series) = report_and_series(&h5);
        let n = series.time.len();
        let at = |d: f64| Approach { distance: d, point: [0.0; 3] };
        let wave = |base: f64| -> Vec<Approach> {
            (0..n)
                .map(|r| match r % 17 {
                    0 => at(f64::INFINITY),
                    5 => at(f64::NAN),
                    _ => at(base + (r as f64 * 0.1).sin()),
                })
                .collect()
        };
        series.pairs = vec![((0, 1), wave(4.0))];
        series.ground = vec![(0, wave(9.0))];
        report.clearance.required_phase_to_phase_m = Some(3.5);
        report.clearance.required_phase_to_ground_m = Some(8.0);
        let out = dir.path().join("clearance");
        std::fs::create_dir_all(&out).unwrap();
        let written = write_plots(&report, &series, &out).unwrap();
        assert_eq!(written.len(), 10);
        let svg = std::fs::read_to_string(out.join("clearance.svg")).unwrap();
        let doc = roxmltree::Document::parse(&svg).unwrap();
        let texts: String = doc.descendants().filter(|n| n.is_text()).filter_map(|n| n.text()).collect();
        for want in [
            "Least phase-to-phase distance",
            "required phase to phase",
            "required phase to ground",
            "- ground",
        ] {
            assert!(texts.contains(want), "clearance.svg lacks `{want}`");
        }
        assert!(doc.descendants().filter(|n| n.tag_name().name() == "polyline").count() >= 2);
        no_partial(&out);

        // NaN and flat motion, one support, then no records at all.
        for g in &mut series.spans {
            for (r, (y, z)) in g.y.iter_mut().zip(&mut g.z).enumerate() {
                y.iter_mut().for_each(|v| *v = if r % 2 == 0 { f64::NAN } else { 0.25 });
                z.iter_mut().for_each(|v| *v = 0.25);
            }
        }
        series.span_tension.iter_mut().for_each(|f| f.iter_mut().for_each(|v| *v = f64::NAN));
        report.supports.truncate(1);
        report.supports[0].peak_magnitude_n = f64::NAN;
        series.pairs.clear();
        series.ground.clear();
        let out = dir.path().join("degenerate");
        std::fs::create_dir_all(&out).unwrap();
        let written = write_plots(&report, &series, &out).unwrap();
        assert_eq!(written.len(), 8, "clearance is skipped without pairs and ground");
        assert!(!out.join("clearance.png").exists());
        let svg = std::fs::read_to_string(out.join("tensions.svg")).unwrap();
        assert!(svg.contains("no finite values"));

        report.supports.clear();
        series.time.clear();
        for g in &mut series.spans {
            g.y.clear();
            g.z.clear();
        }
        series.span_tension.iter_mut().for_each(Vec::clear);
        let written = write_plots(&report, &series, &out).unwrap();
        assert_eq!(written.len(), 8);
        let svg = std::fs::read_to_string(out.join("loads.svg")).unwrap();
        assert!(svg.contains("no supports"));
        no_partial(&out);
    }

    /// A short real run of the galloping example, post-processed: every
    /// plot is written, PNGs decode to their size and are not blank, SVGs
    /// parse with their title and drawn lines, and no `.partial` is left.
    #[test]
    fn a_real_run_gets_every_plot() {
        let dir = tempfile::tempdir().unwrap();
        let h5 = run_example(dir.path());
        let out_dir = dir.path().join("post");
        let out = crate::post_process(
            &h5,
            &crate::PostOptions { out_dir: Some(out_dir.clone()), allow_incomplete: false, xdmf: false },
        )
        .unwrap();
        assert!(out.written.last().unwrap().ends_with("report.json"));

        let has_clearance = !out.report.clearance.ground.is_empty() || !out.report.clearance.pairs.is_empty();
        let mut expected = vec![
            ("orbits", "span 1 phase"),
            ("amplitude", "Vertical displacement"),
            ("tensions", "conductor tension"),
            ("loads", "Support forces"),
        ];
        if has_clearance {
            expected.push(("clearance", "clearance to ground"));
        }
        for (name, title) in expected {
            let png_path = out_dir.join(format!("{name}.png"));
            let svg_path = out_dir.join(format!("{name}.svg"));
            assert!(out.written.contains(&png_path) && out.written.contains(&svg_path), "{name} not listed");

            let decoder = png::Decoder::new(std::fs::File::open(&png_path).unwrap());
            let mut reader = decoder.read_info().unwrap();
            let mut buf = vec![0; reader.output_buffer_size()];
            let info = reader.next_frame(&mut buf).unwrap();
            let (w, h) = if name == "orbits" { (PANEL, PANEL + PANEL_TITLE + 8) } else { CHART };
            assert_eq!((info.width, info.height), (w, h), "{name}.png size");
            assert_eq!(info.color_type, png::ColorType::Rgb);
            let colours: std::collections::HashSet<&[u8]> = buf[..info.buffer_size()].chunks(3).collect();
            assert!(colours.len() > 20, "{name}.png looks blank: {} colours", colours.len());

            let svg = std::fs::read_to_string(&svg_path).unwrap();
            let doc = roxmltree::Document::parse(&svg).unwrap_or_else(|e| panic!("{name}.svg: {e}"));
            assert_eq!(doc.root_element().tag_name().name(), "svg");
            let drawn = doc.descendants().any(|n| matches!(n.tag_name().name(), "path" | "polyline"));
            assert!(drawn, "{name}.svg has no path or polyline");
            let texts: String = doc.descendants().filter(|n| n.is_text()).filter_map(|n| n.text()).collect();
            assert!(texts.contains(title), "{name}.svg lacks the title `{title}`");
        }
        no_partial(&out_dir);
    }
}
