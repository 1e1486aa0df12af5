//! The `[draw]` table, validated into a [`DrawSpec`], with its areas file read.

use crate::config::antenna::AntennaDefaults;
use crate::config::range::Range;
use crate::error::Problem;
use crate::model::draw::{Azimuth, DrawSpec, Mode};
use geo::{MultiPolygon, Polygon};

impl DrawSpec {
    /// Validates the raw `[draw]` values; `dir` resolves the areas path.
    #[allow(clippy::too_many_arguments)]
    pub fn parse(
        density_per_km2: f64,
        areas: Option<&str>,
        keep: Option<f64>,
        hard_core_m: Option<f64>,
        azimuth: Option<&str>,
        toward: Option<[f64; 2]>,
        seed: Option<u64>,
        mode: Option<&str>,
        antenna: &AntennaDefaults,
        dir: &std::path::Path,
        file: &str,
    ) -> Result<DrawSpec, Vec<Problem>> {
        let mut probs = Vec::new();
        let antenna_pol = antenna.polarisation.as_deref();
        let mut bad = |field: &str, msg: String| probs.push(Problem::new(file, Some("[draw]".into()), field, msg));
        let keep = keep.unwrap_or(1.0);
        let hard_core_m = hard_core_m.unwrap_or(0.0);
        for (f, v, r) in [
            ("density_per_km2", density_per_km2, Range::left_open(0.0, 1e7, "per km²")),
            ("keep", keep, Range::left_open(0.0, 1.0, "")),
            ("hard_core_m", hard_core_m, Range::closed(0.0, 10_000.0, "m")),
        ] {
            if !r.contains(v) {
                bad(f, format!("value {v} is outside the allowed range {r}"));
            }
        }
        let az = match (azimuth.unwrap_or("uniform"), toward) {
            ("uniform", _) => Some(Azimuth::Uniform),
            ("nearest", _) => Some(Azimuth::Nearest),
            ("toward", Some([lon, lat])) if (-180.0..=180.0).contains(&lon) && (-85.0..=85.0).contains(&lat) => {
                Some(Azimuth::Toward(lon, lat))
            }
            ("toward", _) => {
                bad(
                    "toward",
                    "needs [lon, lat] in degrees (lon in [-180, 180], lat in [-85, 85]) when azimuth = \"toward\""
                        .into(),
                );
                None
            }
            (other, _) => {
                bad("azimuth", format!("value `{other}` is not one of `uniform`, `toward`, `nearest`"));
                None
            }
        };
        let mode = match mode.unwrap_or("add") {
            "add" => Some(Mode::Add),
            "replace" => Some(Mode::Replace),
            other => {
                bad("mode", format!("value `{other}` is not one of `add`, `replace`"));
                None
            }
        };
        let ant =
            antenna.resolve(&mut |field, msg| bad(field, format!("drawn nodes take the [antenna] defaults: {msg}")));
        let (mut include, mut exclude) = (Vec::new(), Vec::new());
        let areas_path = areas.map(|a| dir.join(a));
        if let Some(a) = areas {
            let path = dir.join(a);
            let pf = path.display().to_string();
            match crate::config::read_input(&path) {
                Err(e) => bad("areas", format!("cannot read {pf}: {e}")),
                Ok(text) => match text.parse::<geojson::GeoJson>() {
                    Ok(geojson::GeoJson::FeatureCollection(fc)) => {
                        for (i, f) in fc.features.iter().enumerate() {
                            let excl = f.property("kind").and_then(|v| v.as_str()) == Some("exclusion");
                            let geom = f.geometry.as_ref().and_then(|g| {
                                MultiPolygon::<f64>::try_from(g.clone())
                                    .ok()
                                    .or_else(|| Polygon::<f64>::try_from(g.clone()).ok().map(|p| MultiPolygon(vec![p])))
                            });
                            match geom {
                                Some(mp) if mp.0.is_empty() || mp.0.iter().any(|p| p.exterior().0.len() < 4) => {
                                    probs.push(Problem::new(
                                        &pf,
                                        Some(format!("feature {i}")),
                                        "geometry",
                                        "a polygon needs an exterior ring of at least 4 positions (closed); this one has none or too few",
                                    ))
                                }
                                Some(mp) => {
                                    let all_ok =
                                        mp.0.iter()
                                            .flat_map(|p| p.exterior().0.iter())
                                            .all(|c| (-180.0..=180.0).contains(&c.x) && (-85.0..=85.0).contains(&c.y));
                                    if !all_ok {
                                        probs.push(Problem::new(
                                            &pf,
                                            Some(format!("feature {i}")),
                                            "geometry",
                                            "coordinates outside lon [-180, 180], lat [-85, 85]",
                                        ));
                                    }
                                    if excl { exclude.extend(mp.0) } else { include.extend(mp.0) }
                                }
                                None => probs.push(Problem::new(
                                    &pf,
                                    Some(format!("feature {i}")),
                                    "geometry",
                                    "expected a Polygon or MultiPolygon",
                                )),
                            }
                        }
                    }
                    Ok(_) => probs.push(Problem::new(
                        &pf,
                        None,
                        "type",
                        "expected a FeatureCollection of Polygon/MultiPolygon features",
                    )),
                    Err(e) => probs.push(Problem::new(&pf, None, "(document)", format!("not valid GeoJSON: {e}"))),
                },
            }
        }
        if probs.is_empty()
            && let (Some(azimuth), Some(mode), Some(antenna)) = (az, mode, ant)
        {
            return Ok(DrawSpec {
                density_per_km2,
                keep,
                hard_core_m,
                azimuth,
                seed: seed.unwrap_or(1),
                mode,
                include,
                areas_path,
                exclude,
                antenna,
                polarisation: antenna_pol.and_then(crate::model::node::Polarisation::parse).unwrap_or_default(),
            });
        }
        Err(probs)
    }
}
