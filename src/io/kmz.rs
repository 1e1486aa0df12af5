//! The field file: one KMZ (OGC KML 2.2 in a zip) per map run, for phones, tablets and
//! virtual globes. `doc.kml` holds the picture layers as ground overlays (the map-only PNGs
//! of [`crate::io::heatmap::render_map_only`], thinned to at most [`OVERLAY_MAX_PX`] pixels
//! a side, so a phone can show them), the nodes as placemarks (azimuth to set, true and
//! magnetic, down-tilt, height, channel, EIRP, keep-out and the cautions), the planned links
//! as lines and the hot spots as outlines.
//!
//! KML is written through the `kml` crate (escaping and element order by its writer; the
//! ground overlay, which the crate has no type for, as a generic element) and zipped by the
//! `zip` crate with a fixed file date, so the same run gives the same bytes.
//!
//! # References
//! - OGC KML 2.2, OGC 07-147r2 (2008): GroundOverlay with LatLonBox (section 11.2), Placemark,
//!   LineString; KMZ packaging (the first `.kml` entry is the document).

use crate::NODATA;
use crate::geometry::grid::Grid;
use crate::io::heatmap::map_png;
use crate::io::writer::LayerOut;
use crate::jobs::install::{CAUTIONS, InstallSheet};
use crate::model::scenario::Scenario;
use kml::types::{Coord, Element, Folder, LineString, Placemark, Point};
use kml::{Kml, KmlDocument, KmlVersion, KmlWriter};
use std::borrow::Cow;
use std::collections::HashMap;
use std::io::Write as _;

/// Largest side of a ground-overlay picture, pixels (larger layers are thinned by a whole
/// stride, nearest cell).
pub const OVERLAY_MAX_PX: usize = 2048;

fn el(name: &str, content: impl ToString) -> Element {
    Element { name: name.into(), content: Some(content.to_string()), ..Default::default() }
}

fn parent(name: &str, children: Vec<Element>) -> Element {
    Element { name: name.into(), children, ..Default::default() }
}

/// The layer thinned to at most [`OVERLAY_MAX_PX`] a side (every `stride`-th cell, each
/// standing for a block of `stride` × `stride` cells): values, columns, rows and stride.
fn thinned<'a>(grid: &Grid, data: &'a [f32]) -> (Cow<'a, [f32]>, usize, usize, usize) {
    let stride = grid.cols().max(grid.rows()).div_ceil(OVERLAY_MAX_PX).max(1);
    if stride == 1 {
        return (Cow::Borrowed(data), grid.cols(), grid.rows(), 1);
    }
    let (cols, rows) = (grid.cols().div_ceil(stride), grid.rows().div_ceil(stride));
    let mut out = Vec::with_capacity(cols * rows);
    for r in 0..rows {
        for c in 0..cols {
            out.push(data[(r * stride) * grid.cols() + c * stride]);
        }
    }
    (Cow::Owned(out), cols, rows, stride)
}

fn placemark(name: String, description: String, geometry: kml::types::Geometry) -> Kml {
    Kml::Placemark(Placemark {
        name: Some(name),
        description: Some(description),
        geometry: Some(geometry),
        ..Default::default()
    })
}

fn folder(name: &str, elements: Vec<Kml>) -> Kml {
    Kml::Folder(Folder { name: Some(name.into()), elements, ..Default::default() })
}

/// The node's description on a placemark: what the installer sets and the cautions.
fn node_text(sc: &Scenario, i: usize, sheet: Result<&InstallSheet, &str>) -> String {
    let mut s = match sheet {
        Ok(sh) => {
            let r = &sh.rows[i];
            let mut s = format!(
                "Height {} m above ground. Azimuth to set {:.1}° true, {:.1}° magnetic (declination {:.2}°, {}).",
                r.height_m, r.azimuth_true_deg, r.azimuth_magnetic_deg, r.declination_deg, sh.declination_date
            );
            if let Some(t) = r.downtilt_deg {
                s += &format!(" Down-tilt {t:.1}° toward {}.", r.peer);
            }
            s += &format!(
                " Channel {} ({} GHz), polarisation {}. EIRP {:.1} dBm; RF keep-out {:.2} m in front of the antenna ({} W/m²).",
                r.channel, r.centre_ghz, r.polarisation, r.eirp_dbm, r.keepout_m, sh.limit_w_m2
            );
            s
        }
        Err(why) => {
            let n = &sc.nodes[i];
            format!(
                "Height {} m above ground. Planned azimuth {:.1}° true; no magnetic azimuth or keep-out: {why}.",
                n.height_m, n.azimuth_deg
            )
        }
    };
    for c in CAUTIONS {
        s += "\n";
        s += c;
    }
    s
}

/// The KMZ bytes of a map run: overlays of `layers` (interference shown, the others listed
/// hidden), nodes, links and hot-spot outlines.
pub(crate) fn kmz(
    sc: &Scenario,
    layers: &[&LayerOut],
    hot_rings: &[Vec<(f64, f64)>],
    sheet: Result<&InstallSheet, String>,
) -> Result<Vec<u8>, String> {
    let b = sc.grid.bbox();
    let mut pictures: Vec<(String, Vec<u8>)> = Vec::new();
    let mut overlays = Vec::new();
    let shown = layers.iter().position(|l| l.name == "interference").unwrap_or(0);
    for (k, l) in layers.iter().enumerate() {
        let (data, cols, rows, stride) = thinned(&sc.grid, l.data);
        let png = map_png(cols, rows, &data, l.unit, l.range)?;
        // The thinned blocks may reach past the grid's east and south edges by less than one
        // block: the box covers them exactly, so every pixel sits on its cells.
        let east = b.west + (cols * stride) as f64 * sc.grid.dlon();
        let south = b.north - (rows * stride) as f64 * sc.grid.dlat();
        let href = format!("files/{}.png", l.name);
        let (lo, hi) = l.range;
        let defined = l.data.iter().any(|v| *v != NODATA);
        let describe =
            if defined { format!("{} [{}], colours from {lo} to {hi}", l.title, l.unit) } else { l.title.clone() };
        overlays.push(Kml::Element(parent(
            "GroundOverlay",
            vec![
                el("name", &l.title),
                el("visibility", if k == shown { 1 } else { 0 }),
                el("description", describe),
                parent("Icon", vec![el("href", &href)]),
                parent(
                    "LatLonBox",
                    vec![el("north", b.north), el("south", south), el("east", east), el("west", b.west)],
                ),
            ],
        )));
        pictures.push((href, png));
    }
    let sheet_ref = sheet.as_ref().map(|s| &**s).map_err(String::as_str);
    let nodes: Vec<Kml> = sc
        .nodes
        .iter()
        .enumerate()
        .map(|(i, n)| {
            let title = match &n.name {
                Some(name) if !name.is_empty() => format!("{} ({name})", n.id),
                _ => n.id.clone(),
            };
            placemark(
                title,
                node_text(sc, i, sheet_ref),
                kml::types::Geometry::Point(Point::new(n.lon, n.lat, Some(n.height_m))),
            )
        })
        .collect();
    let links: Vec<Kml> = crate::model::node::peer_links(&sc.nodes)
        .iter()
        .map(|&(a, c)| {
            let (p, q) = (&sc.nodes[a], &sc.nodes[c]);
            let line = LineString {
                coords: vec![Coord::new(p.lon, p.lat, None), Coord::new(q.lon, q.lat, None)],
                tessellate: true,
                ..Default::default()
            };
            placemark(format!("{} – {}", p.id, q.id), "Planned link".into(), kml::types::Geometry::LineString(line))
        })
        .collect();
    let hot: Vec<Kml> = hot_rings
        .iter()
        .enumerate()
        .map(|(k, ring)| {
            let coords = ring.iter().map(|&(x, y)| Coord::new(x, y, None)).collect();
            let line = LineString { coords, tessellate: true, ..Default::default() };
            placemark(
                format!("Hot spot outline {}", k + 1),
                "Interference above the hot-spot level: avoid placing a new receiver here".into(),
                kml::types::Geometry::LineString(line),
            )
        })
        .collect();
    let mut body = vec![
        Kml::Element(el("name", &sc.name)),
        folder("Map layers", overlays),
        folder("Nodes", nodes),
        folder("Planned links", links),
    ];
    if !hot.is_empty() {
        body.push(folder("Hot spots", hot));
    }
    let doc = Kml::KmlDocument(KmlDocument {
        version: KmlVersion::V22,
        attrs: HashMap::from([("xmlns".to_string(), "http://www.opengis.net/kml/2.2".to_string())]),
        elements: vec![Kml::Document { attrs: HashMap::new(), elements: body }],
    });
    let mut xml = b"<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n".to_vec();
    KmlWriter::<_, f64>::from_writer(&mut xml).write(&doc).map_err(|e| e.to_string())?;
    let mut zip = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    let opts = zip::write::SimpleFileOptions::default()
        .compression_method(zip::CompressionMethod::Deflated)
        .last_modified_time(zip::DateTime::default());
    zip.start_file("doc.kml", opts).map_err(|e| e.to_string())?;
    zip.write_all(&xml).map_err(|e| e.to_string())?;
    // PNGs are already compressed.
    let stored = opts.compression_method(zip::CompressionMethod::Stored);
    for (name, png) in &pictures {
        zip.start_file(name.as_str(), stored).map_err(|e| e.to_string())?;
        zip.write_all(png).map_err(|e| e.to_string())?;
    }
    Ok(zip.finish().map_err(|e| e.to_string())?.into_inner())
}
