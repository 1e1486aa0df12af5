//! `[context] layers`: the user's own GeoJSON files (coast, streets, footprints, site
//! boundary) drawn beneath the sheets as thin lines, so a crew can place the map. They do
//! not take part in any computation. Every problem is named with the file and the feature.

use crate::error::{Problem, Problems};
use std::path::{Path, PathBuf};

/// Lines read from the context files (each a list of lon, lat vertices).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Context {
    /// Polylines and polygon rings, lon/lat degrees.
    pub lines: Vec<Vec<(f64, f64)>>,
    /// The files read (for the input hashes).
    pub files: Vec<PathBuf>,
}

fn coords(p: &[f64]) -> Option<(f64, f64)> {
    match p {
        [lon, lat, ..] if lon.is_finite() && lat.is_finite() && lon.abs() <= 180.0 && lat.abs() <= 90.0 => {
            Some((*lon, *lat))
        }
        _ => None,
    }
}

/// Reads `names` (relative to `dir`): LineString, MultiLineString, Polygon and MultiPolygon
/// features; Points are refused (nodes belong in the node file), as are coordinates outside
/// ±180° / ±90°.
pub(crate) fn read(dir: &Path, names: &[String], probs: &mut Problems) -> Context {
    let mut ctx = Context::default();
    for name in names {
        let path = dir.join(name);
        let file = path.display().to_string();
        ctx.files.push(path.clone());
        let text = match crate::config::read_input(&path) {
            Ok(t) => t,
            Err(e) => {
                probs.push(Problem::new(&file, None, "(file)", format!("cannot read the context file: {e}")));
                continue;
            }
        };
        let fc = match text.parse::<geojson::GeoJson>() {
            Ok(geojson::GeoJson::FeatureCollection(fc)) => fc,
            Ok(_) => {
                probs.push(Problem::new(
                    &file,
                    None,
                    "type",
                    "expected a GeoJSON FeatureCollection of lines or polygons",
                ));
                continue;
            }
            Err(e) => {
                probs.push(Problem::new(&file, None, "(document)", format!("not valid GeoJSON: {e}")));
                continue;
            }
        };
        for (i, f) in fc.features.iter().enumerate() {
            use geojson::GeometryValue::*;
            let feature = Some(format!("feature {i}"));
            let Some(g) = &f.geometry else {
                probs.push(Problem::new(&file, feature, "geometry", "missing; give a line or a polygon"));
                continue;
            };
            let rings: Vec<&geojson::LineStringType> = match &g.value {
                LineString { coordinates: l } => vec![l],
                MultiLineString { coordinates: ls } => ls.iter().collect(),
                Polygon { coordinates: rs } => rs.iter().collect(),
                MultiPolygon { coordinates: ps } => ps.iter().flatten().collect(),
                other => {
                    probs.push(Problem::new(
                        &file,
                        feature,
                        "geometry",
                        format!(
                            "type {} is not drawn as context; allowed: LineString, MultiLineString, Polygon, MultiPolygon",
                            other.type_name()
                        ),
                    ));
                    continue;
                }
            };
            for r in rings {
                let pts: Option<Vec<(f64, f64)>> = r.iter().map(|p| coords(p.as_slice())).collect();
                match pts {
                    Some(p) if p.len() >= 2 => ctx.lines.push(p),
                    Some(_) => {}
                    None => probs.push(Problem::new(
                        &file,
                        feature.clone(),
                        "coordinates",
                        "a position outside [-180, 180] longitude, [-90, 90] latitude (longitude first, as GeoJSON has it)",
                    )),
                }
            }
        }
    }
    ctx
}
