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
    /// Node id, the label beside the marker.
    pub id: String,
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
    /// Colour limits ([`layer_range`]).
    pub range: (f32, f32),
    /// Title-block lines under the title ([`sheet_facts`]).
    pub facts: &'a [String],
    /// The user's context lines (`[context] layers`, lon/lat), drawn beneath everything.
    pub context: &'a [Vec<(f64, f64)>],
}

/// The title block of every sheet: scenario, carrier, receiver assumption, date and
/// version. The date is today's (UTC) unless `SOURCE_DATE_EPOCH` (seconds since 1970, the
/// reproducible-builds convention) fixes it.
pub fn sheet_facts(sc: &crate::model::scenario::Scenario) -> Vec<String> {
    use crate::model::scenario::ReceiverAntenna;
    let rx = sc.receiver();
    let antenna = match rx.antenna {
        ReceiverAntenna::Omni { gain_dbi } => format!("omni {gain_dbi} dBi"),
        ReceiverAntenna::Aimed(_) => "aimed at its best server".to_string(),
    };
    vec![
        format!("Scenario: {}", sc.name()),
        format!("Carrier {} GHz, {} MHz", sc.pathloss().frequency_ghz(), sc.radio().bandwidth_mhz),
        format!("Receiver {} m, {antenna}", rx.height_m),
        format!("{} nodes; cell {} m", sc.nodes.len(), sc.grid.cell_m()),
        format!("{} · lobemap {}", today_iso(), env!("CARGO_PKG_VERSION")),
    ]
}

/// Today's date (UTC) as YYYY-MM-DD, or the one `SOURCE_DATE_EPOCH` gives.
pub fn today_iso() -> String {
    let secs = std::env::var("SOURCE_DATE_EPOCH").ok().and_then(|v| v.parse::<i64>().ok()).unwrap_or_else(|| {
        std::time::SystemTime::now().duration_since(std::time::UNIX_EPOCH).map_or(0, |d| d.as_secs() as i64)
    });
    let (y, m, d) = civil_from_days(secs.div_euclid(86_400));
    format!("{y:04}-{m:02}-{d:02}")
}

/// The proleptic Gregorian date of day `z` since 1970-01-01 (H. Hinnant, "chrono-Compatible
/// Low-Level Date Algorithms", civil_from_days).
fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (yoe + era * 400 + i64::from(m <= 2), m, d)
}

/// Graticule step, degrees: 1, 2 or 5 times a power of ten giving 2 to 6 lines over `span`.
pub fn graticule_step(span_deg: f64) -> f64 {
    let mut p = 10f64.powf((span_deg / 3.0).log10().floor());
    for _ in 0..4 {
        for m in [1.0, 2.0, 5.0] {
            let step = m * p;
            let n = (span_deg / step).floor();
            if (2.0..=6.0).contains(&n) {
                return step;
            }
        }
        p /= 10.0;
    }
    span_deg / 4.0
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

const PANEL_W: u32 = 270;

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
    let (w, h, buf) = render_rgb(spec)?;
    rgb_png(w, h, &buf)
}

/// PNG bytes of a `w` × `h` picture of 8-bit RGB rows.
pub fn rgb_png(w: u32, h: u32, rgb: &[u8]) -> Result<Vec<u8>, String> {
    let mut png = Vec::new();
    image::write_buffer_with_format(
        &mut std::io::Cursor::new(&mut png),
        rgb,
        w,
        h,
        image::ExtendedColorType::Rgb8,
        image::ImageFormat::Png,
    )
    .map_err(|e| e.to_string())?;
    Ok(png)
}

/// The annotated picture as width, height and 8-bit RGB rows, at screen resolution (for
/// [`render`]); [`render_rgb_at`] draws it larger for print.
pub fn render_rgb(spec: &MapSpec) -> Result<(u32, u32, Vec<u8>), String> {
    render_rgb_at(spec, 1.0)
}

/// The annotated picture with every length (map pixels, lines, text, margins) multiplied by
/// `k` ≥ 1: the same sheet at `k` times the resolution, for the print PDF. `k` = 1 is
/// [`render_rgb`].
pub fn render_rgb_at(spec: &MapSpec, k: f64) -> Result<(u32, u32, Vec<u8>), String> {
    register_font();
    let k = k.max(1.0);
    // Lengths of the screen sheet, in pixels, scaled to this one.
    let s = |v: i32| -> i32 { (v as f64 * k).round() as i32 };
    let su = |v: u32| -> u32 { ((v as f64 * k).round() as u32).max(1) };
    let pt = |v: f64| -> f64 { v * k };
    let g = spec.grid;
    let side = g.cols().max(g.rows()) as f64;
    let scale = if side < 900.0 {
        (900.0 / side).ceil().max(1.0)
    } else if side > 2400.0 {
        2400.0 / side
    } else {
        1.0
    } * k;
    let mw = ((g.cols() as f64 * scale).round() as u32).max(1);
    let mh = ((g.rows() as f64 * scale).round() as u32).max(1);
    let (w, h) = (mw + su(PANEL_W), mh.max(su(700)));
    let cmap = tideline();
    let avail = spec.unit == AVAILABILITY;
    let (lo, hi) = spec.range;
    let colour = Colouring { lo, hi, avail };
    let mut buf = vec![255u8; (w as usize) * (h as usize) * 3];
    // Each picture pixel shows the cell under its centre: a picture row repeats the one above
    // when both fall in one grid row, and a pixel repeats its left neighbour in one cell.
    let col_of: Vec<usize> =
        (0..mw).map(|x| (((x as f64 + 0.5) / mw as f64 * g.cols() as f64) as usize).min(g.cols() - 1)).collect();
    let stride = (w as usize) * 3;
    let mut prev_r = usize::MAX;
    for y in 0..mh as usize {
        let r = (((y as f64 + 0.5) / mh as f64 * g.rows() as f64) as usize).min(g.rows() - 1);
        let (done, rest) = buf.split_at_mut(y * stride);
        let line = &mut rest[..mw as usize * 3];
        if r == prev_r {
            line.copy_from_slice(&done[(y - 1) * stride..(y - 1) * stride + mw as usize * 3]);
            continue;
        }
        prev_r = r;
        let mut last = (usize::MAX, [0u8; 3]);
        for (px, &c) in line.chunks_exact_mut(3).zip(&col_of) {
            if c != last.0 {
                last = (c, colour.rgb(&cmap, spec.data[r * g.cols() + c]).unwrap_or([205, 205, 205]));
            }
            px.copy_from_slice(&last.1);
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
        // The user's context lines (coast, streets, ...) beneath everything, then footprints.
        for line in spec.context {
            let pts: Vec<(i32, i32)> = line.iter().map(|&(lon, lat)| to_px(lon, lat)).collect();
            root.draw(&PathElement::new(pts, RGBColor(235, 238, 245).stroke_width(su(1)))).map_err(e)?;
        }
        // Building footprints.
        for ring in spec.footprints {
            let pts: Vec<(i32, i32)> = ring.iter().map(|&(lon, lat)| to_px(lon, lat)).collect();
            root.draw(&PathElement::new(pts, RGBColor(70, 70, 70).stroke_width(su(1)))).map_err(e)?;
        }
        // Planned links.
        for &(a, bb) in spec.links {
            let (p, q) = (&spec.markers[a], &spec.markers[bb]);
            root.draw(&PathElement::new(
                vec![to_px(p.lon, p.lat), to_px(q.lon, q.lat)],
                RGBColor(250, 250, 250).stroke_width(su(3)),
            ))
            .map_err(e)?;
            root.draw(&PathElement::new(vec![to_px(p.lon, p.lat), to_px(q.lon, q.lat)], ink.stroke_width(su(1))))
                .map_err(e)?;
        }
        // Outlined regions (hot spots): a light halo under a dark crimson line.
        for ring in spec.outlines {
            let pts: Vec<(i32, i32)> = ring.iter().map(|&(lon, lat)| to_px(lon, lat)).collect();
            root.draw(&PathElement::new(pts.clone(), RGBColor(255, 255, 255).stroke_width(su(4)))).map_err(e)?;
            root.draw(&PathElement::new(pts, RGBColor(150, 20, 60).stroke_width(su(2)))).map_err(e)?;
        }
        // Beam wedges and markers.
        let rad = ((mw.min(mh) as f64) * 0.06).clamp(14.0 * k, 48.0 * k);
        for m in spec.markers {
            let (x, y) = to_px(m.lon, m.lat);
            if m.beamwidth_deg >= 360.0 {
                root.draw(&Circle::new((x, y), rad as i32 / 2, ink.stroke_width(su(1)))).map_err(e)?;
            } else {
                let mut pts = vec![(x, y)];
                let steps = 12;
                for j in 0..=steps {
                    let a = (m.azimuth_deg - m.beamwidth_deg / 2.0 + m.beamwidth_deg * j as f64 / steps as f64)
                        .to_radians();
                    pts.push((x + (rad * a.sin()) as i32, y - (rad * a.cos()) as i32));
                }
                root.draw(&Polygon::new(pts.clone(), RGBAColor(255, 255, 255, 0.35).filled())).map_err(e)?;
                pts.push((x, y));
                root.draw(&PathElement::new(pts, ink.stroke_width(su(1)))).map_err(e)?;
            }
            root.draw(&Circle::new((x, y), s(4), RGBColor(255, 255, 255).filled())).map_err(e)?;
            root.draw(&Circle::new((x, y), s(4), ink.stroke_width(su(1)))).map_err(e)?;
        }
        // Graticule: thin lines every `step` degrees, labelled on the top (longitude) and the
        // right (latitude) edges of the map.
        let (lon_step, lat_step) = (graticule_step(b.east - b.west), graticule_step(b.north - b.south));
        let faint = RGBAColor(255, 255, 255, 0.45);
        let small = (FONT, pt(12.0)).into_font().color(&ink);
        let (step, decimals) = (lon_step, (-lon_step.log10()).ceil().max(0.0) as usize);
        let mut lon = (b.west / step).ceil() * step;
        while lon < b.east {
            let (x, _) = to_px(lon, b.north);
            root.draw(&PathElement::new(vec![(x, 0), (x, mh as i32)], faint.stroke_width(su(1)))).map_err(e)?;
            let t = format!("{:.*}°{}", decimals, lon.abs(), if lon < 0.0 { "W" } else { "E" });
            root.draw(&Rectangle::new(
                [(x + s(2), s(2)), (x + s(8 + 7 * t.len() as i32), s(17))],
                RGBAColor(255, 255, 255, 0.7).filled(),
            ))
            .map_err(e)?;
            root.draw(&Text::new(t, (x + s(4), s(3)), small.clone())).map_err(e)?;
            lon = ((lon / step).round() + 1.0) * step;
        }
        let (step, decimals) = (lat_step, (-lat_step.log10()).ceil().max(0.0) as usize);
        let mut lat = (b.south / step).ceil() * step;
        while lat < b.north {
            let (_, y) = to_px(b.west, lat);
            root.draw(&PathElement::new(vec![(0, y), (mw as i32, y)], faint.stroke_width(su(1)))).map_err(e)?;
            let t = format!("{:.*}°{}", decimals, lat.abs(), if lat < 0.0 { "S" } else { "N" });
            let x0 = mw as i32 - s(8 + 7 * t.len() as i32);
            root.draw(&Rectangle::new(
                [(x0 - s(2), y - s(16)), (mw as i32 - s(2), y - s(1))],
                RGBAColor(255, 255, 255, 0.7).filled(),
            ))
            .map_err(e)?;
            root.draw(&Text::new(t, (x0, y - s(15)), small.clone())).map_err(e)?;
            lat = ((lat / step).round() + 1.0) * step;
        }
        // Node labels: the first of eight places around the marker that stays on the map and
        // clear of every marker and label placed so far; a node with no free place is left
        // unlabelled rather than overprinted.
        let mut taken: Vec<(i32, i32, i32, i32)> = spec
            .markers
            .iter()
            .map(|m| {
                let (x, y) = to_px(m.lon, m.lat);
                (x - s(5), y - s(5), x + s(5), y + s(5))
            })
            .collect();
        let label_font = (FONT, pt(13.0)).into_font().style(FontStyle::Bold).color(&ink);
        for m in spec.markers {
            let (x, y) = to_px(m.lon, m.lat);
            let (tw, th) = (8 * m.id.chars().count() as i32 + 4, 16);
            let places = [
                (7, -th - 2),
                (7, 3),
                (-tw - 7, -th - 2),
                (-tw - 7, 3),
                (-tw / 2, -th - 9),
                (-tw / 2, 9),
                (9, -th / 2),
                (-tw - 9, -th / 2),
            ];
            let (tw, th) = (s(tw), s(th));
            let free =
                places.iter().map(|&(dx, dy)| (x + s(dx), y + s(dy), x + s(dx) + tw, y + s(dy) + th)).find(|r| {
                    r.0 >= 0
                        && r.1 >= 0
                        && r.2 <= mw as i32
                        && r.3 <= mh as i32
                        && taken.iter().all(|t| r.2 <= t.0 || t.2 <= r.0 || r.3 <= t.1 || t.3 <= r.1)
                });
            if let Some(r) = free {
                root.draw(&Rectangle::new([(r.0, r.1), (r.2, r.3)], RGBAColor(255, 255, 255, 0.8).filled()))
                    .map_err(e)?;
                root.draw(&Text::new(m.id.clone(), (r.0 + s(2), r.1 + s(1)), label_font.clone())).map_err(e)?;
                taken.push(r);
            }
        }
        // North arrow (top-left): the grid is north-up.
        let (ax, ay) = (s(26), s(18));
        root.draw(&Rectangle::new(
            [(ax - s(16), ay - s(8)), (ax + s(16), ay + s(52))],
            RGBAColor(255, 255, 255, 0.8).filled(),
        ))
        .map_err(e)?;
        root.draw(&Polygon::new(
            vec![(ax, ay), (ax - s(9), ay + s(26)), (ax, ay + s(20)), (ax + s(9), ay + s(26))],
            ink.filled(),
        ))
        .map_err(e)?;
        root.draw(&Text::new("N", (ax - s(5), ay + s(28)), (FONT, pt(16.0)).into_font().color(&ink))).map_err(e)?;
        // Scale bar (bottom-left).
        let width_m = g.cols() as f64 * g.cell_m();
        let len_m = nice_length_m(width_m);
        let len_px = (len_m / width_m * mw as f64).round() as i32;
        let (sx, sy) = (s(14), mh as i32 - s(22));
        root.draw(&Rectangle::new(
            [(sx - s(6), sy - s(22)), (sx + len_px + s(8), sy + s(12))],
            RGBAColor(255, 255, 255, 0.8).filled(),
        ))
        .map_err(e)?;
        root.draw(&Rectangle::new([(sx, sy), (sx + len_px, sy + s(6))], ink.filled())).map_err(e)?;
        root.draw(&Rectangle::new([(sx + len_px / 2, sy), (sx + len_px, sy + s(6))], RGBColor(255, 255, 255).filled()))
            .map_err(e)?;
        root.draw(&Rectangle::new([(sx, sy), (sx + len_px, sy + s(6))], ink.stroke_width(su(1)))).map_err(e)?;
        let label = if len_m >= 1000.0 { format!("{} km", len_m / 1000.0) } else { format!("{len_m} m") };
        root.draw(&Text::new(label, (sx, sy - s(19)), (FONT, pt(14.0)).into_font().color(&ink))).map_err(e)?;
        // Colour bar (right panel).
        let px0 = mw as i32 + s(24);
        root.draw(&Text::new(
            spec.title.to_string(),
            (px0, s(12)),
            (FONT, pt(17.0)).into_font().style(FontStyle::Bold).color(&ink),
        ))
        .map_err(e)?;
        root.draw(&Text::new(format!("[{}]", spec.unit), (px0, s(34)), (FONT, pt(14.0)).into_font().color(&ink)))
            .map_err(e)?;
        let (top, bot) = (s(64), (h as i32 * 45 / 100).max(s(260)));
        let bar_w = s(22);
        for y in top..=bot {
            let t = (bot - y) as f64 / (bot - top) as f64;
            let c = cmap[(t * 255.0).round() as usize];
            root.draw(&PathElement::new(vec![(px0, y), (px0 + bar_w, y)], RGBColor(c[0], c[1], c[2]))).map_err(e)?;
        }
        root.draw(&Rectangle::new([(px0, top), (px0 + bar_w, bot)], ink.stroke_width(su(1)))).map_err(e)?;
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
            root.draw(&PathElement::new(vec![(px0 + bar_w, y), (px0 + bar_w + s(6), y)], ink.stroke_width(su(1))))
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
            root.draw(&Text::new(label, (px0 + bar_w + s(10), y - s(7)), (FONT, pt(13.0)).into_font().color(&ink)))
                .map_err(e)?;
            v += step;
        }
        root.draw(&Text::new("grey: no data", (px0, bot + s(12)), (FONT, pt(12.0)).into_font().color(&ink)))
            .map_err(e)?;
        // Symbol legend.
        let mut ly = bot + s(44);
        root.draw(&Text::new("Symbols", (px0, ly), (FONT, pt(14.0)).into_font().style(FontStyle::Bold).color(&ink)))
            .map_err(e)?;
        ly += s(24);
        let text = (FONT, pt(12.0)).into_font().color(&ink);
        root.draw(&Circle::new((px0 + s(10), ly + s(7)), s(4), RGBColor(255, 255, 255).filled())).map_err(e)?;
        root.draw(&Circle::new((px0 + s(10), ly + s(7)), s(4), ink.stroke_width(su(1)))).map_err(e)?;
        root.draw(&Text::new("node (id beside it)", (px0 + s(30), ly), text.clone())).map_err(e)?;
        ly += s(22);
        let wedge =
            vec![(px0 + s(4), ly + s(14)), (px0 + s(12), ly), (px0 + s(20), ly + s(2)), (px0 + s(4), ly + s(14))];
        root.draw(&PathElement::new(wedge, ink.stroke_width(su(1)))).map_err(e)?;
        root.draw(&Text::new("main beam (boresight, HPBW)", (px0 + s(30), ly), text.clone())).map_err(e)?;
        let legend_line = |ly: i32, colour: RGBColor, width: u32, label: String| -> Result<(), String> {
            root.draw(&PathElement::new(
                vec![(px0, ly + s(7)), (px0 + s(22), ly + s(7))],
                colour.stroke_width(su(width)),
            ))
            .map_err(e)?;
            root.draw(&Text::new(label, (px0 + s(30), ly), text.clone())).map_err(e)
        };
        ly += s(22);
        legend_line(ly, ink, 1, "planned link".into())?;
        ly += s(22);
        legend_line(ly, RGBColor(150, 20, 60), 2, "hot spot / zone outline".into())?;
        ly += s(22);
        legend_line(ly, RGBColor(70, 70, 70), 1, "building footprint".into())?;
        ly += s(22);
        legend_line(ly, RGBColor(170, 170, 170), 1, format!("graticule {lon_step}° / {lat_step}°"))?;
        if !spec.context.is_empty() {
            ly += s(22);
            legend_line(ly, RGBColor(200, 205, 215), 1, "context lines ([context] layers)".into())?;
        }
        // Title block (bottom of the panel), framed.
        let tb_top = h as i32 - s(20 + 18 * spec.facts.len() as i32 + 8);
        root.draw(&Rectangle::new(
            [(px0 - s(8), tb_top - s(6)), (w as i32 - s(8), h as i32 - s(10))],
            ink.stroke_width(su(1)),
        ))
        .map_err(e)?;
        for (j, line) in spec.facts.iter().enumerate() {
            root.draw(&Text::new(line.clone(), (px0 - s(2), tb_top + s(18 * j as i32)), text.clone())).map_err(e)?;
        }
        root.present().map_err(e)?;
    }
    Ok((w, h, buf))
}

/// The colour limits of layer `name` with unit `unit`: fixed for probabilities (0..1) and
/// availability (2 to 5 nines), the scenario's fixed scale for the layers it has one for
/// ([`crate::model::scenario::ColourScale`]), else from the values ([`colour_range`]).
pub fn layer_range(scale: &crate::model::scenario::ColourScale, name: &str, unit: &str, data: &[f32]) -> (f32, f32) {
    match unit {
        PROBABILITY => (0.0, 1.0),
        AVAILABILITY => (2.0, 5.0),
        _ => scale.of(name).unwrap_or_else(|| colour_range(data)),
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
pub fn render_map_only(grid: &Grid, data: &[f32], unit: &str, range: (f32, f32)) -> Result<Rendered, String> {
    let png = map_png(grid.cols(), grid.rows(), data, unit, range)?;
    let b = grid.bbox();
    let (pw, ph) = (grid.dlon(), grid.dlat());
    let world = format!("{pw}\n0.0\n0.0\n{}\n{}\n{}\n", -ph, b.west + pw / 2.0, b.north - ph / 2.0);
    Ok(Rendered { png, world })
}

/// The RGBA PNG of `cols` × `rows` values (north row first) on the layer's colours,
/// transparent where undefined.
pub fn map_png(cols: usize, rows: usize, data: &[f32], unit: &str, range: (f32, f32)) -> Result<Vec<u8>, String> {
    let cmap = tideline();
    let (lo, hi) = range;
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

#[cfg(test)]
mod tests {
    use super::*;

    /// Day numbers from Python's datetime (3.12: `(date(y, m, d) - date(1970, 1, 1)).days`).
    #[test]
    fn civil_dates_match_python() {
        assert_eq!(civil_from_days(20789), (2026, 12, 2));
        assert_eq!(civil_from_days(11016), (2000, 2, 29));
        assert_eq!(civil_from_days(-1), (1969, 12, 31));
        assert_eq!(civil_from_days(0), (1970, 1, 1));
    }

    #[test]
    fn graticule_gives_two_to_six_lines() {
        for span in [0.0081, 0.032, 0.3, 1.7, 45.0] {
            let step = graticule_step(span);
            let n = (span / step).floor();
            assert!((2.0..=6.0).contains(&n), "{span}: step {step}, {n} lines");
        }
    }
}
