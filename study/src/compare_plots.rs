//! The comparison's charts, drawn as SVG text (plotters): per wind case
//! (ice case and direction), the worst vertical peak-to-peak motion and
//! the least phase-to-phase distance against wind speed, one line per
//! layout. Cases that are not complete are left out of the lines (the
//! tables name them).

use crate::compare::{wind_groups, Comparison};
use crate::summary::CaseSummary;
use crate::StudyError;
use plotters::prelude::*;

/// Chart size, pixels.
const SIZE: (u32, u32) = (860, 520);
/// Line colours, told apart in print and by most colour-blind readers.
const COLOURS: [RGBColor; 8] = [
    RGBColor(0, 90, 181),
    RGBColor(220, 50, 32),
    RGBColor(0, 150, 80),
    RGBColor(140, 60, 170),
    RGBColor(230, 140, 0),
    RGBColor(90, 90, 90),
    RGBColor(0, 170, 200),
    RGBColor(150, 90, 40),
];

type Line = (String, Vec<(f64, f64)>);

fn lines(c: &Comparison, ice: &str, dir: f64, value: impl Fn(&CaseSummary) -> Option<f64>) -> Vec<Line> {
    let mut out: Vec<Line> = Vec::new();
    for r in &c.layouts {
        let mut pts: Vec<(f64, f64)> = c
            .cases
            .iter()
            .filter(|x| x.layout == r.layout && x.ice == ice && x.wind_direction_deg == dir)
            .filter_map(|x| x.summary.as_ref().and_then(|s| value(s).map(|v| (x.wind_speed_m_s, v))))
            .filter(|(x, y)| x.is_finite() && y.is_finite())
            .collect();
        pts.sort_by(|a, b| a.0.total_cmp(&b.0));
        out.push((r.layout.clone(), pts));
    }
    out
}

fn draw(title: &str, y_label: &str, lines: &[Line]) -> Result<String, String> {
    let all = lines.iter().flat_map(|(_, p)| p.iter());
    let (mut x0, mut x1, mut y0, mut y1) =
        (f64::INFINITY, f64::NEG_INFINITY, f64::INFINITY, f64::NEG_INFINITY);
    for &(x, y) in all {
        x0 = x0.min(x);
        x1 = x1.max(x);
        y0 = y0.min(y);
        y1 = y1.max(y);
    }
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, SIZE).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        if !x0.is_finite() {
            root.draw(&Text::new(
                format!("{title}: no complete case to draw"),
                (20, 40),
                ("sans-serif", 18).into_font(),
            ))
            .map_err(|e| e.to_string())?;
            root.present().map_err(|e| e.to_string())?;
            drop(root);
            return Ok(svg);
        }
        let pad_x = ((x1 - x0) * 0.05).max(0.5);
        let y_lo = y0.min(0.0);
        let pad_y = ((y1 - y_lo) * 0.08).max(1e-3);
        let mut chart = ChartBuilder::on(&root)
            .caption(title, ("sans-serif", 20))
            .margin(14)
            .x_label_area_size(44)
            .y_label_area_size(64)
            .build_cartesian_2d((x0 - pad_x)..(x1 + pad_x), y_lo..(y1 + pad_y))
            .map_err(|e| e.to_string())?;
        chart
            .configure_mesh()
            .light_line_style(RGBColor(238, 238, 238))
            .label_style(("sans-serif", 14))
            .x_desc("mean wind speed at reference height (m/s)")
            .y_desc(y_label)
            .draw()
            .map_err(|e| e.to_string())?;
        for (i, (name, pts)) in lines.iter().enumerate() {
            let colour = COLOURS[i % COLOURS.len()].to_rgba();
            let style = ShapeStyle { color: colour, filled: true, stroke_width: 2 };
            chart
                .draw_series(LineSeries::new(pts.iter().copied(), style))
                .map_err(|e| e.to_string())?
                .label(name.clone())
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], style));
            chart.draw_series(pts.iter().map(|&p| Circle::new(p, 4, style))).map_err(|e| e.to_string())?;
        }
        chart
            .configure_series_labels()
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(|e| e.to_string())?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

fn slug(text: &str) -> String {
    text.chars().map(|c| if c.is_ascii_alphanumeric() || c == '-' { c } else { '_' }).collect()
}

/// The charts of `c`: (file stem, title, SVG text).
pub(crate) fn charts(c: &Comparison) -> Result<Vec<(String, String, String)>, StudyError> {
    let mut out = Vec::new();
    for (ice, dir) in wind_groups(c) {
        let group = format!("ice {ice}, wind towards {dir}°");
        let stem = format!("{}_d{:03.0}", slug(&ice), dir);
        let amp = lines(c, &ice, dir, |s| Some(s.max_vertical_peak_to_peak_m));
        let title = format!("Worst vertical peak-to-peak motion, {group}");
        let svg = draw(&title, "vertical peak-to-peak (m)", &amp).map_err(StudyError::Internal)?;
        out.push((format!("compare_amplitude_{stem}"), title, svg));
        let dist = lines(c, &ice, dir, |s| s.min_phase_distance_m);
        if dist.iter().any(|(_, p)| !p.is_empty()) {
            let title = format!("Least phase-to-phase distance, {group}");
            let svg =
                draw(&title, "least distance between phases (m)", &dist).map_err(StudyError::Internal)?;
            out.push((format!("compare_clearance_{stem}"), title, svg));
        }
    }
    Ok(out)
}
