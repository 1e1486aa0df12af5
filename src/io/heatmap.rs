//! PNG heatmaps with world files: the layer on the project's colour map, a labelled colour
//! bar, a scale bar, a north arrow, node markers with their beam wedges and planned links.
//! Text uses the DejaVu Sans font embedded through the `dejavu` crate (no system fonts).

use crate::NODATA;
use crate::geometry::grid::Grid;
use crate::io::colormap::tideline;
use plotters::prelude::*;
use plotters::style::FontStyle;
use std::sync::Once;

/// Font family name under which the embedded font is registered.
pub const FONT: &str = "sans-serif";

/// Registers the embedded font with plotters (idempotent).
pub fn register_font() {
    static ONCE: Once = Once::new();
    ONCE.call_once(|| {
        // The bytes are a valid TrueType font shipped by the dejavu crate.
        let _ = plotters::style::register_font(FONT, FontStyle::Normal, dejavu::sans::regular());
        let _ = plotters::style::register_font(FONT, FontStyle::Bold, dejavu::sans::bold());
    });
}

/// A node as drawn on a map.
#[derive(Debug, Clone)]
pub struct Marker {
    /// Longitude, degrees.
    pub lon: f64,
    /// Latitude, degrees.
    pub lat: f64,
    /// Boresight azimuth, degrees from true north.
    pub azimuth_deg: f64,
    /// Main-lobe width, degrees (360 for omni).
    pub beamwidth_deg: f64,
}

/// What to draw.
pub struct MapSpec<'a> {
    /// The grid the layer lives on.
    pub grid: &'a Grid,
    /// Layer values, row-major, [`NODATA`] where undefined.
    pub data: &'a [f32],
    /// Title drawn above the colour bar.
    pub title: &'a str,
    /// Unit of the values (`dBm`, `dB`).
    pub unit: &'a str,
    /// Node markers.
    pub markers: &'a [Marker],
    /// Planned links as pairs of marker indices.
    pub links: &'a [(usize, usize)],
    /// Polygon rings (lon, lat) outlined over the map, e.g. hot spots.
    pub outlines: &'a [Vec<(f64, f64)>],
    /// Building footprints (outer rings, lon/lat), drawn as thin grey outlines.
    pub footprints: &'a [Vec<(f64, f64)>],
}

/// Unit label of probability layers, always drawn on a fixed 0..1 scale.
pub const PROBABILITY: &str = "probability";

/// Unit label of availability layers (percent of a year): coloured by the number of nines,
/// −log₁₀(1 − A/100), on a fixed scale from 99 % to 99.999 %.
pub const AVAILABILITY: &str = "% of year";

/// The number of nines of an availability in percent (99.99 → 4).
fn nines(pct: f32) -> f32 {
    -((100.0 - pct).max(1e-6) / 100.0).log10()
}

/// A rendered map: PNG bytes and the world-file text that georeferences them.
pub struct Rendered {
    /// PNG file content.
    pub png: Vec<u8>,
    /// `.pgw` world file content.
    pub world: String,
}

const PANEL_W: u32 = 190;

/// Colour limits: from the 2nd percentile to the maximum of the defined values, widened to
/// whole multiples of 5 and at least 10 wide.
pub fn colour_range(data: &[f32]) -> (f32, f32) {
    let step = (data.len() / 1_000_000).max(1);
    let mut v: Vec<f32> = data.iter().step_by(step).copied().filter(|x| *x != NODATA && x.is_finite()).collect();
    if v.is_empty() {
        return (0.0, 10.0);
    }
    v.sort_by(f32::total_cmp);
    let lo = v[(v.len() as f64 * 0.02) as usize];
    let hi = v[v.len() - 1];
    let mut lo = (lo / 5.0).floor() * 5.0;
    let mut hi = (hi / 5.0).ceil() * 5.0;
    if hi - lo < 10.0 {
        let mid = (hi + lo) / 2.0;
        lo = (mid / 5.0).floor() * 5.0 - 5.0;
        hi = lo + 10.0;
    }
    (lo, hi)
}

/// Picks a scale-bar length: 1, 2 or 5 times a power of ten, near a quarter of `width_m`.
pub fn nice_length_m(width_m: f64) -> f64 {
    let target = width_m / 4.0;
    let p = 10f64.powf(target.log10().floor());
    [5.0, 2.0, 1.0].iter().map(|m| m * p).find(|l| *l <= target).unwrap_or(p)
}

/// Renders the annotated picture of a layer (map, colour bar, scale bar, north arrow,
/// nodes, links and outlines) as PNG bytes; not georeferenced, since the panel and the
/// annotations are not part of the grid ([`render_map_only`] is).
pub fn render(spec: &MapSpec) -> Result<Vec<u8>, String> {
    register_font();
    let g = spec.grid;
    let side = g.cols().max(g.rows()) as f64;
    let scale = if side < 900.0 {
        (900.0 / side).ceil().max(1.0)
    } else if side > 2400.0 {
        2400.0 / side
    } else {
        1.0
    };
    let mw = ((g.cols() as f64 * scale).round() as u32).max(1);
    let mh = ((g.rows() as f64 * scale).round() as u32).max(1);
    let (w, h) = (mw + PANEL_W, mh.max(460));
    let cmap = tideline();
    let avail = spec.unit == AVAILABILITY;
    let (lo, hi) = value_range(spec.unit, spec.data);
    let colour = Colouring { lo, hi, avail };
    let mut buf = vec![255u8; (w * h * 3) as usize];
    for y in 0..mh {
        let r = ((y as f64 + 0.5) / mh as f64 * g.rows() as f64) as usize;
        for x in 0..mw {
            let c = ((x as f64 + 0.5) / mw as f64 * g.cols() as f64) as usize;
            let v = spec.data[r.min(g.rows() - 1) * g.cols() + c.min(g.cols() - 1)];
            let rgb = colour.rgb(&cmap, v).unwrap_or([205, 205, 205]);
            let o = ((y * w + x) * 3) as usize;
            buf[o..o + 3].copy_from_slice(&rgb);
        }
    }
    let b = g.bbox();
    let to_px = |lon: f64, lat: f64| -> (i32, i32) {
        (
            ((lon - b.west) / (b.east - b.west) * mw as f64) as i32,
            ((b.north - lat) / (b.north - b.south) * mh as f64) as i32,
        )
    };
    {
        let root = BitMapBackend::with_buffer(&mut buf, (w, h)).into_drawing_area();
        let e = |x: DrawingAreaErrorKind<_>| x.to_string();
        let ink = RGBColor(20, 24, 32);
        // Building footprints beneath everything else.
        for ring in spec.footprints {
            let pts: Vec<(i32, i32)> = ring.iter().map(|&(lon, lat)| to_px(lon, lat)).collect();
            root.draw(&PathElement::new(pts, RGBColor(70, 70, 70).stroke_width(1))).map_err(e)?;
        }
        // Planned links.
        for &(a, bb) in spec.links {
            let (p, q) = (&spec.markers[a], &spec.markers[bb]);
            root.draw(&PathElement::new(
                vec![to_px(p.lon, p.lat), to_px(q.lon, q.lat)],
                RGBColor(250, 250, 250).stroke_width(3),
            ))
            .map_err(e)?;
            root.draw(&PathElement::new(vec![to_px(p.lon, p.lat), to_px(q.lon, q.lat)], ink.stroke_width(1)))
                .map_err(e)?;
        }
        // Outlined regions (hot spots): a light halo under a dark crimson line.
        for ring in spec.outlines {
            let pts: Vec<(i32, i32)> = ring.iter().map(|&(lon, lat)| to_px(lon, lat)).collect();
            root.draw(&PathElement::new(pts.clone(), RGBColor(255, 255, 255).stroke_width(4))).map_err(e)?;
            root.draw(&PathElement::new(pts, RGBColor(150, 20, 60).stroke_width(2))).map_err(e)?;
        }
        // Beam wedges and markers.
        let rad = ((mw.min(mh) as f64) * 0.06).clamp(14.0, 48.0);
        for m in spec.markers {
            let (x, y) = to_px(m.lon, m.lat);
            if m.beamwidth_deg >= 360.0 {
                root.draw(&Circle::new((x, y), rad as i32 / 2, ink.stroke_width(1))).map_err(e)?;
            } else {
                let mut pts = vec![(x, y)];
                let steps = 12;
                for k in 0..=steps {
                    let a = (m.azimuth_deg - m.beamwidth_deg / 2.0 + m.beamwidth_deg * k as f64 / steps as f64)
                        .to_radians();
                    pts.push((x + (rad * a.sin()) as i32, y - (rad * a.cos()) as i32));
                }
                root.draw(&Polygon::new(pts.clone(), RGBAColor(255, 255, 255, 0.35).filled())).map_err(e)?;
                pts.push((x, y));
                root.draw(&PathElement::new(pts, ink.stroke_width(1))).map_err(e)?;
            }
            root.draw(&Circle::new((x, y), 4, RGBColor(255, 255, 255).filled())).map_err(e)?;
            root.draw(&Circle::new((x, y), 4, ink.stroke_width(1))).map_err(e)?;
        }
        // North arrow (top-left): the grid is north-up.
        let (ax, ay) = (26, 18);
        root.draw(&Rectangle::new([(ax - 16, ay - 8), (ax + 16, ay + 52)], RGBAColor(255, 255, 255, 0.8).filled()))
            .map_err(e)?;
        root.draw(&Polygon::new(vec![(ax, ay), (ax - 9, ay + 26), (ax, ay + 20), (ax + 9, ay + 26)], ink.filled()))
            .map_err(e)?;
        root.draw(&Text::new("N", (ax - 5, ay + 28), (FONT, 16).into_font().color(&ink))).map_err(e)?;
        // Scale bar (bottom-left).
        let width_m = g.cols() as f64 * g.cell_m();
        let len_m = nice_length_m(width_m);
        let len_px = (len_m / width_m * mw as f64).round() as i32;
        let (sx, sy) = (14, mh as i32 - 22);
        root.draw(&Rectangle::new(
            [(sx - 6, sy - 22), (sx + len_px + 8, sy + 12)],
            RGBAColor(255, 255, 255, 0.8).filled(),
        ))
        .map_err(e)?;
        root.draw(&Rectangle::new([(sx, sy), (sx + len_px, sy + 6)], ink.filled())).map_err(e)?;
        root.draw(&Rectangle::new([(sx + len_px / 2, sy), (sx + len_px, sy + 6)], RGBColor(255, 255, 255).filled()))
            .map_err(e)?;
        root.draw(&Rectangle::new([(sx, sy), (sx + len_px, sy + 6)], ink.stroke_width(1))).map_err(e)?;
        let label = if len_m >= 1000.0 { format!("{} km", len_m / 1000.0) } else { format!("{len_m} m") };
        root.draw(&Text::new(label, (sx, sy - 19), (FONT, 14).into_font().color(&ink))).map_err(e)?;
        // Colour bar (right panel).
        let px0 = mw as i32 + 24;
        root.draw(&Text::new(
            spec.title.to_string(),
            (px0, 12),
            (FONT, 17).into_font().style(FontStyle::Bold).color(&ink),
        ))
        .map_err(e)?;
        root.draw(&Text::new(format!("[{}]", spec.unit), (px0, 34), (FONT, 14).into_font().color(&ink))).map_err(e)?;
        let (top, bot) = (64, h as i32 - 40);
        let bar_w = 22;
        for y in top..=bot {
            let t = (bot - y) as f64 / (bot - top) as f64;
            let c = cmap[(t * 255.0).round() as usize];
            root.draw(&PathElement::new(vec![(px0, y), (px0 + bar_w, y)], RGBColor(c[0], c[1], c[2]))).map_err(e)?;
        }
        root.draw(&Rectangle::new([(px0, top), (px0 + bar_w, bot)], ink.stroke_width(1))).map_err(e)?;
        let span = hi - lo;
        let step = if avail {
            1.0
        } else if span > 60.0 {
            10.0
        } else if span > 2.0 {
            5.0
        } else {
            span / 10.0
        };
        let mut v = (lo / step).ceil() * step;
        while v <= hi + 1e-3 {
            let y = bot - ((v - lo) / span * (bot - top) as f32).round() as i32;
            root.draw(&PathElement::new(vec![(px0 + bar_w, y), (px0 + bar_w + 6, y)], ink.stroke_width(1)))
                .map_err(e)?;
            let label = if avail {
                // 2 → 99, 3 → 99.9, …: the percentage with v − 2 nines after the point.
                format!(
                    "{}{:.*}",
                    if v <= lo + 1e-3 { "≤" } else { "" },
                    (v - 2.0).round() as usize,
                    100.0 - 10f32.powf(2.0 - v)
                )
            } else if step < 1.0 {
                format!("{v:.1}")
            } else {
                format!("{v:.0}")
            };
            root.draw(&Text::new(label, (px0 + bar_w + 10, y - 7), (FONT, 13).into_font().color(&ink))).map_err(e)?;
            v += step;
        }
        root.draw(&Text::new("grey: no data", (px0, h as i32 - 26), (FONT, 12).into_font().color(&ink))).map_err(e)?;
        root.present().map_err(e)?;
    }
    let img = image::RgbImage::from_raw(w, h, buf).ok_or("image buffer size mismatch")?;
    let mut png = Vec::new();
    img.write_to(&mut std::io::Cursor::new(&mut png), image::ImageFormat::Png).map_err(|e| e.to_string())?;
    Ok(png)
}

/// The colour limits of a layer with unit `unit`: fixed for probabilities (0..1) and
/// availability (2 to 5 nines), else from the values ([`colour_range`]).
pub fn value_range(unit: &str, data: &[f32]) -> (f32, f32) {
    match unit {
        PROBABILITY => (0.0, 1.0),
        AVAILABILITY => (2.0, 5.0),
        _ => colour_range(data),
    }
}

/// How values become colours: linear from `lo` to `hi` on the colour map, or by the number
/// of nines for availability.
struct Colouring {
    lo: f32,
    hi: f32,
    avail: bool,
}

impl Colouring {
    /// The colour of `v`, or `None` where the layer is undefined.
    fn rgb(&self, cmap: &[[u8; 3]], v: f32) -> Option<[u8; 3]> {
        if v == NODATA || !v.is_finite() {
            return None;
        }
        let x = if self.avail { nines(v) } else { v };
        Some(cmap[(((x - self.lo) / (self.hi - self.lo)).clamp(0.0, 1.0) * 255.0).round() as usize])
    }
}

/// The georeferenced picture of a layer alone: one RGBA pixel per cell (north row first),
/// transparent where the layer is undefined, with the world file that places each pixel on
/// its cell exactly (ESRI world-file convention: pixel size and the centre of the top-left
/// pixel).
pub fn render_map_only(grid: &Grid, data: &[f32], unit: &str) -> Result<Rendered, String> {
    let png = map_png(grid.cols(), grid.rows(), data, unit)?;
    let b = grid.bbox();
    let (pw, ph) = (grid.dlon(), grid.dlat());
    let world = format!("{pw}\n0.0\n0.0\n{}\n{}\n{}\n", -ph, b.west + pw / 2.0, b.north - ph / 2.0);
    Ok(Rendered { png, world })
}

/// The RGBA PNG of `cols` × `rows` values (north row first) on the layer's colours,
/// transparent where undefined.
pub fn map_png(cols: usize, rows: usize, data: &[f32], unit: &str) -> Result<Vec<u8>, String> {
    let cmap = tideline();
    let (lo, hi) = value_range(unit, data);
    let colour = Colouring { lo, hi, avail: unit == AVAILABILITY };
    let mut buf = vec![0u8; data.len() * 4];
    for (px, &v) in buf.chunks_exact_mut(4).zip(data) {
        if let Some(c) = colour.rgb(&cmap, v) {
            px.copy_from_slice(&[c[0], c[1], c[2], 255]);
        }
    }
    let img = image::RgbaImage::from_raw(cols as u32, rows as u32, buf).ok_or("image buffer size mismatch")?;
    let mut png = Vec::new();
    img.write_to(&mut std::io::Cursor::new(&mut png), image::ImageFormat::Png).map_err(|e| e.to_string())?;
    Ok(png)
}
