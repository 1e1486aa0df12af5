//! CDF plots of the aggregate interference: the gamma fit, the exact distribution and the
//! Monte Carlo on a dBm axis, as the CDF (linear) beside the exceedance 1 − F (log scale, so
//! the tail where the gamma fit parts from the exact law is visible). PNG and SVG.

use crate::io::heatmap::{FONT, register_font};
use crate::random::characterise::CdfRow;
use plotters::coord::Shift;
use plotters::prelude::*;

/// One curve set: a label (e.g. `beamwidth_deg = 30`) and its table.
pub struct CurveSet<'a> {
    /// Legend label prefix.
    pub label: String,
    /// The CDF table.
    pub rows: &'a [CdfRow],
}

const PALETTE: [RGBColor; 6] = [
    RGBColor(24, 86, 140),
    RGBColor(190, 80, 30),
    RGBColor(40, 130, 90),
    RGBColor(130, 60, 150),
    RGBColor(160, 130, 20),
    RGBColor(90, 90, 90),
];

fn draw<DB: DrawingBackend>(root: DrawingArea<DB, Shift>, sets: &[CurveSet], title: &str) -> Result<(), String> {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let (xmin, xmax) = sets
        .iter()
        .flat_map(|s| s.rows.iter().map(|r| r.x_dbm))
        .fold((f64::MAX, f64::MIN), |a, x| (a.0.min(x), a.1.max(x)));
    let root = root.titled(title, (FONT, 20)).map_err(e)?;
    let (left, right) = root.split_horizontally(root.dim_in_pixel().0 / 2);
    let mut cdf = ChartBuilder::on(&left)
        .margin(12)
        .x_label_area_size(40)
        .y_label_area_size(50)
        .caption("CDF  P(I ≤ x)", (FONT, 16))
        .build_cartesian_2d(xmin..xmax, 0.0..1.0)
        .map_err(e)?;
    cdf.configure_mesh()
        .x_desc("aggregate interference x [dBm]")
        .y_desc("probability")
        .label_style((FONT, 13))
        .draw()
        .map_err(e)?;
    let mut ccdf = ChartBuilder::on(&right)
        .margin(12)
        .x_label_area_size(40)
        .y_label_area_size(60)
        .caption("Exceedance  P(I > x), log scale", (FONT, 16))
        .build_cartesian_2d(xmin..xmax, (1e-5..1.0).log_scale())
        .map_err(e)?;
    ccdf.configure_mesh()
        .x_desc("aggregate interference x [dBm]")
        .y_desc("probability")
        .label_style((FONT, 13))
        .draw()
        .map_err(e)?;
    for (i, s) in sets.iter().enumerate() {
        let c = PALETTE[i % PALETTE.len()];
        let pre = if s.label.is_empty() { String::new() } else { format!("{}: ", s.label) };
        let exact: Vec<(f64, f64)> = s.rows.iter().map(|r| (r.x_dbm, r.exact)).collect();
        let gamma: Vec<(f64, f64)> = s.rows.iter().map(|r| (r.x_dbm, r.gamma)).collect();
        let mc: Vec<(f64, f64)> = s.rows.iter().filter_map(|r| r.mc.map(|m| (r.x_dbm, m))).collect();
        let tail = |v: &[(f64, f64)]| -> Vec<(f64, f64)> { v.iter().map(|&(x, f)| (x, (1.0 - f).max(1e-5))).collect() };
        cdf.draw_series(LineSeries::new(exact.clone(), c.stroke_width(3)))
            .map_err(e)?
            .label(format!("{pre}exact"))
            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], c.stroke_width(3)));
        cdf.draw_series(DashedLineSeries::new(gamma.clone(), 7, 4, c.stroke_width(2)))
            .map_err(e)?
            .label(format!("{pre}gamma fit"))
            .legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 8, y), (x + 12, y), (x + 20, y)], c.stroke_width(1))
            });
        if !mc.is_empty() {
            cdf.draw_series(mc.iter().map(|&p| Circle::new(p, 2, c.filled())))
                .map_err(e)?
                .label(format!("{pre}Monte Carlo"))
                .legend(move |(x, y)| Circle::new((x + 10, y), 3, c.filled()));
            ccdf.draw_series(tail(&mc).into_iter().filter(|p| p.1 > 1e-5).map(|p| Circle::new(p, 2, c.filled())))
                .map_err(e)?;
        }
        ccdf.draw_series(LineSeries::new(tail(&exact), c.stroke_width(3))).map_err(e)?;
        ccdf.draw_series(DashedLineSeries::new(tail(&gamma), 7, 4, c.stroke_width(2))).map_err(e)?;
    }
    cdf.configure_series_labels()
        .position(SeriesLabelPosition::UpperLeft)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font((FONT, 12))
        .draw()
        .map_err(e)?;
    root.present().map_err(e)?;
    Ok(())
}

/// Renders the plot as PNG bytes.
pub fn png(sets: &[CurveSet], title: &str) -> Result<Vec<u8>, String> {
    register_font();
    let (w, h) = (1400u32, 620u32);
    let mut buf = vec![255u8; (w * h * 3) as usize];
    draw(BitMapBackend::with_buffer(&mut buf, (w, h)).into_drawing_area(), sets, title)?;
    let img = image::RgbImage::from_raw(w, h, buf).ok_or("image buffer size mismatch")?;
    let mut out = Vec::new();
    img.write_to(&mut std::io::Cursor::new(&mut out), image::ImageFormat::Png).map_err(|e| e.to_string())?;
    Ok(out)
}

/// Renders the plot as SVG text.
pub fn svg(sets: &[CurveSet], title: &str) -> Result<String, String> {
    register_font();
    let mut s = String::new();
    draw(SVGBackend::with_string(&mut s, (1400, 620)).into_drawing_area(), sets, title)?;
    Ok(s)
}
