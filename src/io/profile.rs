//! The path profile of one link as an SVG and a PNG (the same drawing): ground and buildings raised by the Earth bulge,
//! the bulge itself, the straight ray between the antennas and the first Fresnel ellipse
//! around it, with the link's verdict in the title.

use crate::io::heatmap::{FONT, register_font};
use crate::model::obstruction::{Profile, earth_bulge_m, fresnel_radius_m};
use plotters::coord::Shift;
use plotters::prelude::*;

/// What the title says about the link.
pub struct ProfileSpec<'a> {
    /// e.g. `BB05 – BB06`.
    pub title: &'a str,
    /// The verdict, e.g. `blocked by Warehouse 3`.
    pub verdict: &'a str,
    /// The profile from the `from` end.
    pub profile: &'a Profile,
    /// Wavelength, m.
    pub wavelength_m: f64,
    /// Effective Earth radius factor.
    pub earth_k: f64,
}

const GROUND: RGBColor = RGBColor(150, 120, 80);
const BUILDING: RGBColor = RGBColor(120, 120, 130);
const RAY: RGBColor = RGBColor(24, 86, 140);
const FRESNEL: RGBColor = RGBColor(40, 130, 90);

fn draw<DB: DrawingBackend>(root: DrawingArea<DB, Shift>, sp: &ProfileSpec) -> Result<(), String> {
    let e = |x: DrawingAreaErrorKind<DB::ErrorType>| x.to_string();
    root.fill(&WHITE).map_err(e)?;
    let p = sp.profile;
    let d = p.length_m;
    let bulge = |x: f64| earth_bulge_m(x, d - x, sp.earth_k);
    let ray = |x: f64| p.tx_alt_m + (p.rx_alt_m - p.tx_alt_m) * x / d.max(1e-9);
    let r1 = |x: f64| if x > 0.0 && x < d { fresnel_radius_m(sp.wavelength_m, x, d - x) } else { 0.0 };
    let mut lo = p.tx_alt_m.min(p.rx_alt_m);
    let mut hi = p.tx_alt_m.max(p.rx_alt_m);
    for q in &p.points {
        lo = lo.min(q.ground_m + bulge(q.distance_m));
        hi = hi.max(q.top_m + bulge(q.distance_m)).max(ray(q.distance_m) + r1(q.distance_m));
    }
    let pad = ((hi - lo) * 0.08).max(1.0);
    let (lo, hi) = ((lo - pad).min(0.0), hi + pad);
    let mut ch = ChartBuilder::on(&root)
        .margin(14)
        .x_label_area_size(40)
        .y_label_area_size(56)
        .caption(format!("{}: {}", sp.title, sp.verdict), (FONT, 17))
        .build_cartesian_2d(0.0..d.max(1.0), lo..hi)
        .map_err(e)?;
    ch.configure_mesh()
        .x_desc("distance from the first end [m]")
        .y_desc("height [m]")
        .label_style((FONT, 13))
        .draw()
        .map_err(e)?;
    let ends = |v: Vec<(f64, f64)>, at0: f64, at1: f64| -> Vec<(f64, f64)> {
        let mut w = vec![(0.0, at0)];
        w.extend(v);
        w.push((d, at1));
        w
    };
    let g0 = p.points.first().map_or(0.0, |q| q.ground_m);
    let g1 = p.points.last().map_or(0.0, |q| q.ground_m);
    let tops: Vec<(f64, f64)> = p.points.iter().map(|q| (q.distance_m, q.top_m + bulge(q.distance_m))).collect();
    let ground: Vec<(f64, f64)> = p.points.iter().map(|q| (q.distance_m, q.ground_m + bulge(q.distance_m))).collect();
    ch.draw_series(AreaSeries::new(ends(tops, g0, g1), lo, BUILDING.mix(0.8)))
        .map_err(e)?
        .label("buildings")
        .legend(|(x, y)| Rectangle::new([(x, y - 5), (x + 18, y + 5)], BUILDING.filled()));
    ch.draw_series(AreaSeries::new(ends(ground, g0, g1), lo, GROUND.mix(0.9)))
        .map_err(e)?
        .label("ground (with the Earth bulge)")
        .legend(|(x, y)| Rectangle::new([(x, y - 5), (x + 18, y + 5)], GROUND.filled()));
    let steps = 200;
    let xs: Vec<f64> = (0..=steps).map(|i| d * i as f64 / steps as f64).collect();
    ch.draw_series(DashedLineSeries::new(
        xs.iter().map(|&x| (x, lo.max(0.0) + bulge(x))),
        6,
        4,
        GROUND.stroke_width(1),
    ))
    .map_err(e)?
    .label(format!("Earth bulge, k = {:.3}", sp.earth_k))
    .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], GROUND.stroke_width(1)));
    ch.draw_series(LineSeries::new(xs.iter().map(|&x| (x, ray(x) + r1(x))), FRESNEL.stroke_width(1)))
        .map_err(e)?
        .label("first Fresnel zone")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], FRESNEL.stroke_width(1)));
    ch.draw_series(LineSeries::new(xs.iter().map(|&x| (x, ray(x) - r1(x))), FRESNEL.stroke_width(1))).map_err(e)?;
    ch.draw_series(LineSeries::new(xs.iter().map(|&x| (x, ray(x))), RAY.stroke_width(2)))
        .map_err(e)?
        .label("ray between the antennas")
        .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], RAY.stroke_width(2)));
    ch.configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font((FONT, 12))
        .draw()
        .map_err(e)?;
    root.present().map_err(e)?;
    Ok(())
}

/// Renders the profile as SVG text.
pub fn svg(sp: &ProfileSpec) -> Result<String, String> {
    register_font();
    let mut s = String::new();
    draw(SVGBackend::with_string(&mut s, SIZE).into_drawing_area(), sp)?;
    Ok(s)
}

/// Profile pictures' size, pixels (the SVG's user units and the PNG's pixels).
const SIZE: (u32, u32) = (900, 360);

/// Renders the profile as a PNG of the same drawing as [`svg`], for viewers, documents and
/// printers that take no SVG.
pub fn png(sp: &ProfileSpec) -> Result<Vec<u8>, String> {
    register_font();
    let mut rgb = vec![0u8; (SIZE.0 * SIZE.1 * 3) as usize];
    draw(BitMapBackend::with_buffer(&mut rgb, SIZE).into_drawing_area(), sp)?;
    crate::io::heatmap::rgb_png(SIZE.0, SIZE.1, &rgb)
}
