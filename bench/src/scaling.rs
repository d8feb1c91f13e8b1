//! Growth of the time per step with the number of DOF: the least-squares
//! slope of log(time per step) against log(DOF) over the cases of a record,
//! and a log–log chart of it (SVG, plotters).

use crate::record::CaseRecord;
use plotters::prelude::*;

/// (DOF, wall time per step in s) of every case that took steps.
pub fn points(cases: &[CaseRecord]) -> Vec<(f64, f64)> {
    cases
        .iter()
        .filter(|c| c.steps > 0 && c.dynamic_s > 0.0)
        .map(|c| (c.dof as f64, c.dynamic_s / c.steps as f64))
        .collect()
}

/// Slope `b` and factor `a` of the least-squares fit `t = a · DOF^b` in
/// log–log coordinates; `None` for fewer than two distinct DOF counts.
pub fn fit(points: &[(f64, f64)]) -> Option<(f64, f64)> {
    let logs: Vec<(f64, f64)> = points.iter().map(|&(x, y)| (x.ln(), y.ln())).collect();
    let n = logs.len() as f64;
    if logs.len() < 2 {
        return None;
    }
    let (mx, my) = (logs.iter().map(|p| p.0).sum::<f64>() / n, logs.iter().map(|p| p.1).sum::<f64>() / n);
    let sxx: f64 = logs.iter().map(|p| (p.0 - mx).powi(2)).sum();
    if sxx <= 1e-12 {
        return None;
    }
    let sxy: f64 = logs.iter().map(|p| (p.0 - mx) * (p.1 - my)).sum();
    let b = sxy / sxx;
    Some((b, (my - b * mx).exp()))
}

/// A log–log chart of time per step against DOF with the fitted line and,
/// for reference, linear growth through the smallest case.
///
/// # Errors
/// A message from plotters, or fewer than two cases to fit.
pub fn chart_svg(cases: &[CaseRecord]) -> Result<String, String> {
    let pts = points(cases);
    let (b, a) = fit(&pts).ok_or("fewer than two cases of different size to fit")?;
    let (x0, x1) = pts.iter().fold((f64::INFINITY, 0.0_f64), |(lo, hi), p| (lo.min(p.0), hi.max(p.0)));
    let (y0, y1) = pts.iter().fold((f64::INFINITY, 0.0_f64), |(lo, hi), p| (lo.min(p.1), hi.max(p.1)));
    let first = pts.iter().copied().min_by(|p, q| p.0.total_cmp(&q.0)).unwrap_or((x0, y0));
    let linear = |x: f64| first.1 * x / first.0;
    let (y_lo, y_hi) = (y0.min(linear(x0)) / 1.5, y1.max(linear(x1)).max(a * x1.powf(b)) * 1.5);
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (760, 480)).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let mut chart = ChartBuilder::on(&root)
            .caption(format!("time per step against DOF: fitted slope {b:.2}"), ("sans-serif", 20))
            .margin(14)
            .x_label_area_size(44)
            .y_label_area_size(70)
            .build_cartesian_2d((x0 / 1.5..x1 * 1.5).log_scale(), (y_lo..y_hi).log_scale())
            .map_err(|e| e.to_string())?;
        chart
            .configure_mesh()
            .light_line_style(RGBColor(238, 238, 238))
            .label_style(("sans-serif", 14))
            .x_desc("degrees of freedom")
            .y_desc("wall time per step (s)")
            .draw()
            .map_err(|e| e.to_string())?;
        let fitted = ShapeStyle { color: RGBColor(200, 60, 40).to_rgba(), filled: true, stroke_width: 2 };
        let reference =
            ShapeStyle { color: RGBColor(150, 150, 150).to_rgba(), filled: true, stroke_width: 1 };
        let measured = ShapeStyle { color: RGBColor(30, 90, 170).to_rgba(), filled: true, stroke_width: 2 };
        let ends = [x0 / 1.2, x1 * 1.2];
        chart
            .draw_series(LineSeries::new(ends.iter().map(|&x| (x, a * x.powf(b))), fitted))
            .map_err(|e| e.to_string())?
            .label(format!("fit: t ∝ DOF^{b:.2}"))
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], fitted));
        chart
            .draw_series(LineSeries::new(ends.iter().map(|&x| (x, linear(x))), reference))
            .map_err(|e| e.to_string())?
            .label("linear growth (slope 1)")
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], reference));
        chart
            .draw_series(pts.iter().map(|&p| Circle::new(p, 5, measured)))
            .map_err(|e| e.to_string())?
            .label("measured cases")
            .legend(move |(x, y)| Circle::new((x + 10, y), 4, measured));
        chart
            .configure_series_labels()
            .position(SeriesLabelPosition::UpperLeft)
            .background_style(WHITE.mix(0.85))
            .border_style(BLACK)
            .draw()
            .map_err(|e| e.to_string())?;
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_power_law_gives_back_its_exponent() {
        // t = 2e-6 · DOF^1.15 exactly: the least-squares line in log–log
        // coordinates is the power law itself (closed form).
        let pts: Vec<(f64, f64)> =
            [1e3, 1e4, 5e4, 2e5].iter().map(|&x| (x, 2e-6 * f64::powf(x, 1.15))).collect();
        let (b, a) = fit(&pts).unwrap();
        assert!((b - 1.15).abs() < 1e-12 && (a / 2e-6 - 1.0).abs() < 1e-9, "{b} {a}");
        assert!(fit(&pts[..1]).is_none());
        assert!(fit(&[(1e3, 1.0), (1e3, 2.0)]).is_none(), "one size only");
    }
}
