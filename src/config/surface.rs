//! `[surface]`: the ground elevation GeoTIFF and the building footprints, read, checked and
//! laid onto the surface lattice ([`crate::model::surface`]).
//!
//! - Ground: a single-band GeoTIFF in metres, georeferenced by a tie point and pixel scale
//!   (no rotation), in EPSG:4326 or any CRS whose EPSG code proj4rs knows (UTM zones and
//!   other projected systems); each surface cell takes the bilinear value at its centre.
//!   Nodata (the GDAL_NODATA value, or NaN) is refused under a node or a planned link;
//!   elsewhere it takes `nodata_fill_m` if given and is refused otherwise. Without `ground`
//!   the ground is flat at 0 m.
//! - Buildings: a GeoJSON FeatureCollection of Polygon or MultiPolygon footprints with
//!   `height_m` above the ground (also `name`, `note` and keys starting `x_`); a cell is in a
//!   footprint when its centre is, and overlapping footprints keep the tallest.

use crate::config::range::Range;
use crate::error::{Problem, Problems};
use crate::geometry::frame::LocalFrame;
use crate::geometry::grid::Grid;
use crate::model::node::Node;
use crate::model::surface::{Building, NO_BUILDING, Surface, lattice};
use geo::{BoundingRect, Contains, Validation};
use rayon::prelude::*;
use serde::Deserialize;
use std::path::Path;

/// `[surface]` as read.
#[derive(Debug, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawSurface {
    pub(crate) ground: Option<String>,
    pub(crate) buildings: Option<String>,
    pub(crate) earth_k: Option<f64>,
    pub(crate) obstruction_cap_db: Option<f64>,
    pub(crate) nodata_fill_m: Option<f64>,
}

/// Largest surface lattice plus elevation raster lobemap reads, bytes (a third of this
/// machine class's 24 GiB).
pub const MAX_SURFACE_BYTES: u64 = 8 << 30;

/// A ground elevation raster.
struct Dem {
    width: usize,
    height: usize,
    data: Vec<f32>,
    nodata: Option<f32>,
    /// Model coordinates of raster point (0, 0) and the pixel size (x east, y south).
    x0: f64,
    y0: f64,
    sx: f64,
    sy: f64,
    /// Raster coordinate of a pixel's centre relative to its index (0.5 for PixelIsArea).
    centre: f64,
    /// The CRS's EPSG code (4326 read as longitude, latitude in degrees).
    epsg: u16,
}

fn geokeys(keys: &[u16]) -> Vec<(u16, u16, u16, u16)> {
    keys.chunks_exact(4).skip(1).map(|k| (k[0], k[1], k[2], k[3])).collect()
}

fn read_dem(path: &Path, file: &str) -> Result<Dem, Problem> {
    use tiff::decoder::{Decoder, DecodingResult};
    use tiff::tags::Tag;
    let p = |field: &str, msg: String| Problem::new(file, None, field, msg);
    let meta = std::fs::metadata(path).map_err(|e| p("ground", format!("cannot read the ground file: {e}")))?;
    if !meta.is_file() {
        return Err(p("ground", "not a regular file (a folder, FIFO or device is not an input)".into()));
    }
    let f = std::fs::File::open(path).map_err(|e| p("ground", format!("cannot read the ground file: {e}")))?;
    let mut d = Decoder::new(std::io::BufReader::new(f))
        .map_err(|e| p("(file)", format!("not a readable TIFF: {e}")))?
        .with_limits(tiff::decoder::Limits::unlimited());
    let (w, h) = d.dimensions().map_err(|e| p("(file)", format!("not a readable TIFF: {e}")))?;
    let (w, h) = (w as usize, h as usize);
    match d.colortype() {
        Ok(tiff::ColorType::Gray(_)) => {}
        Ok(c) => {
            return Err(p(
                "(bands)",
                format!("has colour type {c:?}; a ground model is one band of elevations in metres"),
            ));
        }
        Err(e) => return Err(p("(file)", format!("not a readable TIFF: {e}"))),
    }
    let need = (w as u64) * (h as u64) * 8;
    if need > MAX_SURFACE_BYTES {
        return Err(p(
            "(size)",
            format!(
                "{w} x {h} pixels need about {:.0} MiB to read, above lobemap's limit of {} MiB for the surface: crop the file to the area mapped",
                need as f64 / 1048576.0,
                MAX_SURFACE_BYTES >> 20
            ),
        ));
    }
    if d.find_tag(Tag::ModelTransformationTag).ok().flatten().is_some() {
        return Err(p(
            "ModelTransformation",
            "is georeferenced by a transformation matrix (possibly rotated); lobemap reads north-up rasters with a tie point and pixel scale: warp it north-up (e.g. gdalwarp)".into(),
        ));
    }
    let scale = d.get_tag_f64_vec(Tag::ModelPixelScaleTag).ok();
    let tie = d.get_tag_f64_vec(Tag::ModelTiepointTag).ok();
    let keys = d.get_tag_u16_vec(Tag::GeoKeyDirectoryTag).ok();
    let (Some(scale), Some(tie), Some(keys)) = (scale, tie, keys) else {
        return Err(p(
            "(georeferencing)",
            "has no GeoTIFF georeferencing (ModelPixelScale, ModelTiepoint and GeoKeyDirectory tags): save it as a GeoTIFF with its CRS".into(),
        ));
    };
    if scale.len() < 2 || tie.len() < 6 || !(scale[0] > 0.0 && scale[1] > 0.0) {
        return Err(p(
            "(georeferencing)",
            format!("has pixel scale {scale:?} and tie point {tie:?}; both must be positive and complete"),
        ));
    }
    let keys = geokeys(&keys);
    let key = |id: u16| keys.iter().find(|k| k.0 == id && k.1 == 0).map(|k| k.3);
    let model = key(1024);
    let epsg = match model {
        Some(1) => key(3072),
        Some(2) => key(2048),
        _ => None,
    };
    let epsg = match epsg {
        Some(4326) => 4326,
        Some(c) if c != 32767 && proj4rs::Proj::from_epsg_code(c).is_ok() => c,
        Some(c) => {
            return Err(p(
                "(CRS)",
                format!(
                    "is in CRS code {c}{}, which lobemap cannot transform; use EPSG:4326 or a projected EPSG system such as a UTM zone (e.g. gdalwarp -t_srs EPSG:32630)",
                    if c == 32767 { " (user-defined)" } else { "" }
                ),
            ));
        }
        None => {
            return Err(p(
                "(CRS)",
                format!(
                    "has model type {model:?} and no EPSG code for its CRS; use EPSG:4326 or a projected EPSG system such as a UTM zone"
                ),
            ));
        }
    };
    let centre = if key(1025) == Some(2) { 0.0 } else { 0.5 };
    let nodata = d
        .get_tag_ascii_string(Tag::GdalNodata)
        .ok()
        .and_then(|s| s.trim_matches(char::from(0)).trim().parse::<f64>().ok())
        .map(|v| v as f32);
    let data: Vec<f32> = match d.read_image().map_err(|e| p("(file)", format!("cannot decode the pixels: {e}")))? {
        DecodingResult::U8(v) => v.into_iter().map(f32::from).collect(),
        DecodingResult::U16(v) => v.into_iter().map(f32::from).collect(),
        DecodingResult::I8(v) => v.into_iter().map(f32::from).collect(),
        DecodingResult::I16(v) => v.into_iter().map(f32::from).collect(),
        DecodingResult::I32(v) => v.into_iter().map(|x| x as f32).collect(),
        DecodingResult::U32(v) => v.into_iter().map(|x| x as f32).collect(),
        DecodingResult::F32(v) => v,
        DecodingResult::F64(v) => v.into_iter().map(|x| x as f32).collect(),
        _ => {
            return Err(p(
                "(bands)",
                "has a sample type lobemap does not read; use 16-bit integers or 32-bit floats".into(),
            ));
        }
    };
    if data.len() != w * h {
        return Err(p(
            "(bands)",
            format!("holds {} samples for {w} x {h} pixels; a ground model is one band", data.len()),
        ));
    }
    // Raster point (i, j) is model point (x, y).
    let (i, j, x, y) = (tie[0], tie[1], tie[3], tie[4]);
    Ok(Dem {
        width: w,
        height: h,
        data,
        nodata,
        x0: x - i * scale[0],
        y0: y + j * scale[1],
        sx: scale[0],
        sy: scale[1],
        centre,
        epsg,
    })
}

/// A sample of the DEM: Some(elevation), Some(NaN) for nodata, None outside.
fn sample(dem: &Dem, x: f64, y: f64) -> Option<f32> {
    let u = (x - dem.x0) / dem.sx - dem.centre;
    let v = (dem.y0 - y) / dem.sy - dem.centre;
    let (lo_u, hi_u) = (-dem.centre, dem.width as f64 - 1.0 + dem.centre);
    let (lo_v, hi_v) = (-dem.centre, dem.height as f64 - 1.0 + dem.centre);
    if !(u >= lo_u - 1e-9 && u <= hi_u + 1e-9 && v >= lo_v - 1e-9 && v <= hi_v + 1e-9) {
        return None;
    }
    let u = u.clamp(0.0, (dem.width - 1) as f64);
    let v = v.clamp(0.0, (dem.height - 1) as f64);
    let (c, r) = ((u as usize).min(dem.width.saturating_sub(2)), (v as usize).min(dem.height.saturating_sub(2)));
    let (fu, fv) = (u - c as f64, v - r as f64);
    let at = |r: usize, c: usize| {
        let z = dem.data[r.min(dem.height - 1) * dem.width + c.min(dem.width - 1)];
        if z.is_nan() || dem.nodata == Some(z) { f32::NAN } else { z }
    };
    let (a, b, cc, dd) = (at(r, c), at(r, c + 1), at(r + 1, c), at(r + 1, c + 1));
    let w = [(1.0 - fu) * (1.0 - fv), fu * (1.0 - fv), (1.0 - fu) * fv, fu * fv];
    let mut z = 0.0f64;
    for (zk, wk) in [a, b, cc, dd].into_iter().zip(w) {
        if wk > 0.0 {
            if zk.is_nan() {
                return Some(f32::NAN);
            }
            z += wk * zk as f64;
        }
    }
    Some(z as f32)
}

/// A footprint as read.
struct Footprint {
    shape: geo::MultiPolygon<f64>,
    building: Building,
}

fn read_buildings(path: &Path, file: &str, probs: &mut Problems) -> Vec<Footprint> {
    let text = match crate::config::read_input(path) {
        Ok(t) => t,
        Err(e) => {
            probs.push(Problem::new(file, None, "(file)", format!("cannot read the building file: {e}")));
            return Vec::new();
        }
    };
    let fc = match text.parse::<geojson::GeoJson>() {
        Ok(geojson::GeoJson::FeatureCollection(fc)) => fc,
        Ok(_) => {
            probs.push(Problem::new(
                file,
                None,
                "type",
                "expected a GeoJSON FeatureCollection of Polygon or MultiPolygon footprints",
            ));
            return Vec::new();
        }
        Err(e) => {
            probs.push(Problem::new(file, None, "(document)", format!("not valid GeoJSON: {e}")));
            return Vec::new();
        }
    };
    let mut out = Vec::new();
    for (i, f) in fc.features.iter().enumerate() {
        let name = f.properties.as_ref().and_then(|p| p.get("name")).and_then(|v| v.as_str()).map(str::to_string);
        let label = name.clone().unwrap_or_else(|| format!("building {i}"));
        let feature = Some(match &name {
            Some(n) => format!("feature {i} (name {n})"),
            None => format!("feature {i}"),
        });
        let mut ok = true;
        let mut bad = |field: &str, msg: String| {
            probs.push(Problem::new(file, feature.clone(), field, msg));
            ok = false;
        };
        let props = f.properties.clone().unwrap_or_default();
        for k in props.keys() {
            if !matches!(k.as_str(), "height_m" | "name" | "note") && !k.starts_with("x_") {
                bad(
                    k,
                    format!("key `{k}` is not a footprint key; allowed: height_m, name, note, and keys starting x_"),
                );
            }
        }
        for k in ["name", "note"] {
            if let Some(v) = props.get(k).filter(|v| !v.is_string()) {
                bad(k, format!("value {v} must be a string"));
            }
        }
        let height = match props.get("height_m") {
            None => {
                bad("height_m", "missing: every footprint needs its height above the ground in metres".into());
                f64::NAN
            }
            Some(v) => match v.as_f64() {
                Some(h) if Range::left_open(0.0, 1000.0, "m").contains(h) => h,
                _ => {
                    bad(
                        "height_m",
                        format!("value {v} is outside the allowed range {}", Range::left_open(0.0, 1000.0, "m")),
                    );
                    f64::NAN
                }
            },
        };
        let rings_of = |rings: &geojson::PolygonType, bad: &mut dyn FnMut(&str, String)| -> Option<geo::Polygon<f64>> {
            let mut ls = Vec::new();
            for (k, ring) in rings.iter().enumerate() {
                if ring.len() < 4 {
                    bad("geometry", format!("ring {k} has {} positions; a closed ring needs at least 4", ring.len()));
                    return None;
                }
                let (first, last) = (ring[0].as_slice(), ring[ring.len() - 1].as_slice());
                if first != last {
                    bad(
                        "geometry",
                        format!("ring {k} is not closed: its first position {first:?} differs from its last {last:?}"),
                    );
                    return None;
                }
                for pos in ring {
                    let pos = pos.as_slice();
                    let (lon, lat) =
                        (pos.first().copied().unwrap_or(f64::NAN), pos.get(1).copied().unwrap_or(f64::NAN));
                    if !((-180.0..=180.0).contains(&lon) && (-85.0..=85.0).contains(&lat)) {
                        bad(
                            "geometry",
                            format!("position {pos:?} is not [longitude, latitude] within [-180, 180] x [-85, 85]"),
                        );
                        return None;
                    }
                }
                ls.push(geo::LineString::from(
                    ring.iter().map(|p| (p.as_slice()[0], p.as_slice()[1])).collect::<Vec<_>>(),
                ));
            }
            let mut it = ls.into_iter();
            let outer = it.next()?;
            Some(geo::Polygon::new(outer, it.collect()))
        };
        let shape = match f.geometry.as_ref().map(|g| &g.value) {
            Some(geojson::GeometryValue::Polygon { coordinates: r }) => {
                rings_of(r, &mut bad).map(|p| geo::MultiPolygon(vec![p]))
            }
            Some(geojson::GeometryValue::MultiPolygon { coordinates: ps }) => {
                let v: Vec<_> = ps.iter().filter_map(|r| rings_of(r, &mut bad)).collect();
                (v.len() == ps.len()).then_some(geo::MultiPolygon(v))
            }
            other => {
                bad(
                    "geometry",
                    format!(
                        "is {}; a footprint is a Polygon or MultiPolygon",
                        other.map(|v| v.type_name()).unwrap_or("missing")
                    ),
                );
                None
            }
        };
        if let Some(s) = &shape
            && let Err(errs) = s.check_validation()
        {
            bad("geometry", format!("is not a valid polygon: {errs}"));
        }
        if ok && let Some(shape) = shape {
            out.push(Footprint { shape, building: Building { label, height_m: height } });
        }
    }
    out
}

/// Builds the surface for `grid` and `nodes`, or records every problem. `links` lists the
/// planned links (pairs of node indices) whose paths must have ground under them.
#[allow(clippy::too_many_arguments)]
pub(crate) fn build(
    raw: &RawSurface,
    rooftop: bool,
    dir: &Path,
    file: &str,
    node_file: &str,
    grid: &Grid,
    frame: &LocalFrame,
    nodes: &[Node],
    links: &[(usize, usize)],
    probs: &mut Problems,
) -> Option<Surface> {
    let table = || Some("[surface]".to_string());
    let earth_k = raw.earth_k.unwrap_or(4.0 / 3.0);
    let k_range = Range::closed(0.5, 1e6, "");
    if !k_range.contains(earth_k) {
        probs.push(Problem::new(file, table(), "earth_k", format!("value {earth_k} is outside the allowed range {k_range} (4/3 is the median atmosphere; large values flatten the Earth)")));
    }
    let cap_db = raw.obstruction_cap_db.unwrap_or(40.0);
    let cap_range = Range::closed(0.0, 200.0, "dB");
    if !cap_range.contains(cap_db) {
        probs.push(Problem::new(
            file,
            table(),
            "obstruction_cap_db",
            format!("value {cap_db} is outside the allowed range {cap_range}"),
        ));
    }
    if let Some(v) = raw.nodata_fill_m
        && !Range::closed(-500.0, 9000.0, "m").contains(v)
    {
        probs.push(Problem::new(
            file,
            table(),
            "nodata_fill_m",
            format!("value {v} is outside the allowed range {}", Range::closed(-500.0, 9000.0, "m")),
        ));
    }
    let (west, north, rows, cols, r0, c0) = lattice(grid, nodes.iter().map(|n| (n.lon, n.lat)));
    let cells = rows as u64 * cols as u64;
    if cells * 12 > MAX_SURFACE_BYTES {
        probs.push(Problem::new(file, table(), "(size)", format!("the surface lattice of {cols} x {rows} cells needs about {:.0} MiB, above the limit of {} MiB: use a larger [grid] cell_m or a smaller area", (cells * 12) as f64 / 1048576.0, MAX_SURFACE_BYTES >> 20)));
        return None;
    }
    let mut files = Vec::new();
    let dem = raw.ground.as_ref().and_then(|g| {
        let path = dir.join(g);
        let label = path.display().to_string();
        files.push(path.clone());
        read_dem(&path, &label).map_err(|p| probs.push(p)).ok().map(|d| (d, label))
    });
    let footprints = raw.buildings.as_ref().map(|b| {
        let path = dir.join(b);
        files.push(path.clone());
        (read_buildings(&path, &path.display().to_string(), probs), path.display().to_string())
    });
    if raw.ground.is_some() && dem.is_none() {
        return None;
    }
    let lon_of = |c: usize| west + (c as f64 + 0.5) * grid.dlon();
    let lat_of = |r: usize| north - (r as f64 + 0.5) * grid.dlat();
    // The lattice cell holding a point (points outside take the nearest edge cell).
    let cell = |lon: f64, lat: f64| {
        let c = (((lon - west) / grid.dlon()).max(0.0) as usize).min(cols - 1);
        let r = (((north - lat) / grid.dlat()).max(0.0) as usize).min(rows - 1);
        r * cols + c
    };
    // Ground per cell: NaN for nodata, −∞ outside the raster.
    let mut ground = vec![0f32; rows * cols];
    if let Some((dem, label)) = &dem {
        let to = if dem.epsg == 4326 { None } else { proj4rs::Proj::from_epsg_code(dem.epsg).ok() };
        let from = proj4rs::Proj::from_epsg_code(4326).ok();
        let latlong = to.as_ref().is_some_and(|p| p.is_latlong());
        ground.par_chunks_mut(cols).enumerate().for_each(|(r, row)| {
            for (c, g) in row.iter_mut().enumerate() {
                let (lon, lat) = (lon_of(c), lat_of(r));
                let xy = match (&from, &to) {
                    (Some(f), Some(t)) => {
                        let mut p = (lon.to_radians(), lat.to_radians(), 0.0);
                        proj4rs::transform::transform(f, t, &mut p)
                            .ok()
                            .map(|_| if latlong { (p.0.to_degrees(), p.1.to_degrees()) } else { (p.0, p.1) })
                    }
                    _ => Some((lon, lat)),
                };
                *g = xy.and_then(|(x, y)| sample(dem, x, y)).unwrap_or(f32::NEG_INFINITY);
            }
        });
        let outside = ground.iter().filter(|g| **g == f32::NEG_INFINITY).count();
        if outside > 0 {
            let (mut rmin, mut rmax, mut cmin, mut cmax) = (usize::MAX, 0, usize::MAX, 0);
            for (k, g) in ground.iter().enumerate() {
                if *g == f32::NEG_INFINITY {
                    let (r, c) = (k / cols, k % cols);
                    (rmin, rmax, cmin, cmax) = (rmin.min(r), rmax.max(r), cmin.min(c), cmax.max(c));
                }
            }
            probs.push(Problem::new(
                label.clone(),
                None,
                "(extent)",
                format!(
                    "covers {} of the {} cells the map and nodes need ({:.1} % missing, between longitudes {:.6} and {:.6} and latitudes {:.6} and {:.6}): use a ground model covering the whole grid and every node",
                    ground.len() - outside,
                    ground.len(),
                    100.0 * outside as f64 / ground.len() as f64,
                    lon_of(cmin), lon_of(cmax), lat_of(rmax), lat_of(rmin)
                ),
            ));
            return None;
        }
        for n in nodes {
            if ground[cell(n.lon, n.lat)].is_nan() {
                probs.push(Problem::new(
                    label.clone(),
                    Some(format!("node {}", n.id)),
                    "(nodata)",
                    format!(
                        "the ground model has no value under node {} at [{}, {}]: fill the hole or move the node",
                        n.id, n.lon, n.lat
                    ),
                ));
            }
        }
        for &(a, b) in links {
            let (na, nb) = (&nodes[a], &nodes[b]);
            let (xa, ya) = frame.to_local(na.lon, na.lat);
            let (xb, yb) = frame.to_local(nb.lon, nb.lat);
            let steps = (((xb - xa).hypot(yb - ya)) / (grid.cell_m() / 4.0)).ceil().max(1.0) as usize;
            let hole = (0..=steps)
                .map(|i| i as f64 / steps as f64)
                .find(|t| ground[cell(na.lon + t * (nb.lon - na.lon), na.lat + t * (nb.lat - na.lat))].is_nan());
            if let Some(t) = hole {
                probs.push(Problem::new(
                    label.clone(),
                    Some(format!("link {}-{}", na.id, nb.id)),
                    "(nodata)",
                    format!(
                        "the ground model has no value under the link {} to {} at {:.0} m from {}: fill the hole",
                        na.id,
                        nb.id,
                        t * (xb - xa).hypot(yb - ya),
                        na.id
                    ),
                ));
            }
        }
        let holes = ground.iter().filter(|g| g.is_nan()).count();
        if holes > 0 {
            match raw.nodata_fill_m {
                Some(v) => ground.iter_mut().filter(|g| g.is_nan()).for_each(|g| *g = v as f32),
                None => probs.push(Problem::new(
                    label.clone(),
                    None,
                    "(nodata)",
                    format!("{holes} of the {} cells have no ground value (nodata): give [surface] nodata_fill_m (e.g. the sea level, 0) or fill the raster", ground.len()),
                )),
            }
        }
    }
    let mut top = ground.clone();
    let mut building = vec![NO_BUILDING; rows * cols];
    let mut buildings = Vec::new();
    let mut outlines = Vec::new();
    if let Some((fps, label)) = footprints {
        let (clon, clat) = grid.bbox().centre();
        for fp in fps {
            let Some(rect) = fp.shape.bounding_rect() else { continue };
            let (e, nn) = LocalFrame::new(clat, clon).to_local(rect.center().x, rect.center().y);
            if e.hypot(nn) > 1000.0 * crate::config::scenario::MAX_EXTENT_KM {
                probs.push(Problem::new(label.clone(), Some(format!("building {}", fp.building.label)), "geometry", format!("lies {:.0} km from the grid centre; footprints are [longitude, latitude] near the layout (are they swapped?)", e.hypot(nn) / 1000.0)));
                continue;
            }
            let c_lo = ((rect.min().x - west) / grid.dlon()).floor().max(0.0) as usize;
            let c_hi = (((rect.max().x - west) / grid.dlon()).ceil().max(0.0) as usize).min(cols);
            let r_lo = ((north - rect.max().y) / grid.dlat()).floor().max(0.0) as usize;
            let r_hi = (((north - rect.min().y) / grid.dlat()).ceil().max(0.0) as usize).min(rows);
            let idx = buildings.len() as u32;
            for r in r_lo..r_hi {
                for c in c_lo..c_hi {
                    let k = r * cols + c;
                    if fp.shape.contains(&geo::Point::new(lon_of(c), lat_of(r))) {
                        let z = ground[k] + fp.building.height_m as f32;
                        if building[k] == NO_BUILDING || z > top[k] {
                            top[k] = z;
                            building[k] = idx;
                        }
                    }
                }
            }
            outlines.extend(fp.shape.0.iter().map(|p| p.exterior().0.iter().map(|q| (q.x, q.y)).collect::<Vec<_>>()));
            buildings.push(fp.building);
        }
        // A node inside a footprint must stand above its roof.
        for n in nodes {
            let b = building[cell(n.lon, n.lat)];
            if b != NO_BUILDING && n.height_m < buildings[b as usize].height_m {
                let bl = &buildings[b as usize];
                probs.push(Problem::new(
                    node_file,
                    Some(format!("node {}", n.id)),
                    "height_m",
                    format!("value {} m puts node {} inside {} (roof at {} m above the ground): a node's height_m is above the ground, so a rooftop node needs at least {} m", n.height_m, n.id, bl.label, bl.height_m, bl.height_m),
                ));
            }
        }
    }
    Some(Surface {
        west,
        north,
        dlon: grid.dlon(),
        dlat: grid.dlat(),
        cell_m: grid.cell_m(),
        rows,
        cols,
        r0,
        c0,
        ground,
        top,
        building,
        buildings,
        earth_k,
        cap_db,
        rooftop,
        files,
        outlines,
    })
}
