//! Random layouts in the local plane: homogeneous Poisson points, independent thinning and
//! Matérn type II hard-core thinning. Seeded with a portable generator (PCG64), so the same
//! seed gives the same points on every machine.
//!
//! # References
//! - B. Matérn, Spatial Variation, 2nd ed., Springer 1986; D. Stoyan, W. S. Kendall and
//!   J. Mecke, Stochastic Geometry and its Applications: type II retained intensity
//!   (1 − exp(−λπh²)) / (πh²).

use rand::RngExt;

use rand_distr::{Distribution, Poisson};
use rstar::{RTree, primitives::GeomWithData};

/// An axis-aligned window in local metres.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Window {
    /// West edge, m.
    pub xmin: f64,
    /// South edge, m.
    pub ymin: f64,
    /// East edge, m.
    pub xmax: f64,
    /// North edge, m.
    pub ymax: f64,
}

impl Window {
    /// Area, m².
    pub fn area_m2(&self) -> f64 {
        (self.xmax - self.xmin) * (self.ymax - self.ymin)
    }
    /// The window grown by `m` metres on every side.
    pub fn grown(&self, m: f64) -> Window {
        Window { xmin: self.xmin - m, ymin: self.ymin - m, xmax: self.xmax + m, ymax: self.ymax + m }
    }
    /// Whether a point lies inside (edges included).
    pub fn contains(&self, p: [f64; 2]) -> bool {
        p[0] >= self.xmin && p[0] <= self.xmax && p[1] >= self.ymin && p[1] <= self.ymax
    }
}

/// Homogeneous Poisson points of `density_per_m2` in `w`: a Poisson count, then uniform
/// positions.
pub fn poisson(rng: &mut impl rand::Rng, density_per_m2: f64, w: &Window) -> Vec<[f64; 2]> {
    let mean = density_per_m2 * w.area_m2();
    let n = if mean > 0.0 { Poisson::new(mean).map(|d| d.sample(rng) as usize).unwrap_or(0) } else { 0 };
    (0..n).map(|_| [rng.random_range(w.xmin..w.xmax), rng.random_range(w.ymin..w.ymax)]).collect()
}

/// Keeps each point independently with probability `keep` (a Poisson process of density
/// keep·λ results).
pub fn thin_independent(rng: &mut impl rand::Rng, pts: Vec<[f64; 2]>, keep: f64) -> Vec<[f64; 2]> {
    pts.into_iter().filter(|_| rng.random::<f64>() < keep).collect()
}

/// Matérn type II: every point gets a uniform mark and is kept when no other point within
/// `hard_core_m` has a smaller mark. Draw the parent on the target window grown by
/// `hard_core_m` and keep only points inside the target, so that edge points see all their
/// competitors.
pub fn thin_matern_ii(
    rng: &mut impl rand::Rng,
    pts: Vec<[f64; 2]>,
    hard_core_m: f64,
    target: &Window,
) -> Vec<[f64; 2]> {
    let marks: Vec<f64> = pts.iter().map(|_| rng.random::<f64>()).collect();
    let tree = RTree::bulk_load(pts.iter().enumerate().map(|(i, p)| GeomWithData::new(*p, i)).collect());
    let h2 = hard_core_m * hard_core_m;
    pts.iter()
        .enumerate()
        .filter(|(i, p)| {
            target.contains(**p)
                && tree.locate_within_distance(**p, h2).all(|q| q.data == *i || marks[q.data] > marks[*i])
        })
        .map(|(_, p)| *p)
        .collect()
}

/// Retained intensity of Matérn type II thinning of a Poisson process of density λ with
/// hard-core distance h: (1 − exp(−λπh²)) / (πh²).
pub fn matern_ii_density(density_per_m2: f64, hard_core_m: f64) -> f64 {
    let a = std::f64::consts::PI * hard_core_m * hard_core_m;
    (1.0 - (-density_per_m2 * a).exp()) / a
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;

    // Matérn II retained intensity (Matérn 1986; Stoyan, Kendall and Mecke): λ = 1e-3 m⁻²,
    // h = 10, 20, 50 m give 8.5815e-4, 5.6929e-4, 1.2727e-4 m⁻² (shared model notes, numpy).
    #[test]
    fn matern_ii_density_reference_values() {
        for (h, want) in [(10.0, 8.5815e-4), (20.0, 5.6929e-4), (50.0, 1.2727e-4)] {
            assert!((matern_ii_density(1e-3, h) - want).abs() < 5e-8, "{h}");
        }
    }

    /// Drawn counts against the formula: 20 seeded draws on 2 km × 2 km; the mean count must
    /// lie within 4 standard errors (sample standard deviation / √20) of λ_II·|W|.
    #[test]
    fn drawn_matern_counts_match_retained_intensity() {
        let w = Window { xmin: -1000.0, ymin: -1000.0, xmax: 1000.0, ymax: 1000.0 };
        for h in [10.0, 50.0] {
            let mut rng = rand_pcg::Pcg64::seed_from_u64(h as u64);
            let counts: Vec<f64> = (0..20)
                .map(|_| {
                    let parent = poisson(&mut rng, 1e-3, &w.grown(h));
                    thin_matern_ii(&mut rng, parent, h, &w).len() as f64
                })
                .collect();
            let mean = counts.iter().sum::<f64>() / 20.0;
            let var = counts.iter().map(|c| (c - mean).powi(2)).sum::<f64>() / 19.0;
            let expect = matern_ii_density(1e-3, h) * w.area_m2();
            assert!((mean - expect).abs() < 4.0 * (var / 20.0).sqrt(), "h {h}: mean {mean}, expected {expect}");
        }
    }

    /// Independent thinning keeps a Poisson process of density keep·λ: with a Poisson count
    /// of mean 2000, 4 σ = 4 √2000 ≈ 179.
    #[test]
    fn independent_thinning_keeps_the_fraction() {
        let w = Window { xmin: 0.0, ymin: 0.0, xmax: 2000.0, ymax: 1000.0 };
        let mut rng = rand_pcg::Pcg64::seed_from_u64(5);
        let parent = poisson(&mut rng, 4e-3, &w);
        let n = thin_independent(&mut rng, parent, 0.25).len() as f64;
        assert!((n - 2000.0).abs() < 4.0 * 2000f64.sqrt(), "{n}");
    }
}

use crate::config::nodes::Node;
use crate::config::scenario::{AntennaDefaults, Range, Scenario};
use crate::error::Problem;
use crate::model::antenna::Pattern;
use geo::{BoundingRect, Contains, MultiPolygon, Point, Polygon};
use rand::SeedableRng;

/// How drawn nodes are pointed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Azimuth {
    /// Uniform on [0, 360).
    Uniform,
    /// At a given point (lon, lat).
    Toward(f64, f64),
    /// Like the nearest node of the fixed layout.
    Nearest,
}

/// Whether drawn nodes join the fixed layout or replace it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Mode {
    /// Fixed nodes plus drawn nodes.
    Add,
    /// Drawn nodes only.
    Replace,
}

/// The `[draw]` table, validated.
#[derive(Debug, Clone, PartialEq)]
pub struct DrawSpec {
    /// Parent density, per km².
    pub density_per_km2: f64,
    /// Independent retention probability.
    pub keep: f64,
    /// Matérn II hard core, m (0: none).
    pub hard_core_m: f64,
    /// Orientation rule.
    pub azimuth: Azimuth,
    /// Seed.
    pub seed: u64,
    /// Add or replace.
    pub mode: Mode,
    /// Areas to draw in (lon/lat); empty: the grid box.
    pub include: Vec<Polygon<f64>>,
    /// Areas cut out (features with `kind = "exclusion"`).
    pub exclude: Vec<Polygon<f64>>,
    /// Antenna of drawn nodes (the `[antenna]` defaults): pattern, power, height, activity.
    pub antenna: (Pattern, f64, f64, f64),
}

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
        if let Some(a) = areas {
            let path = dir.join(a);
            let pf = path.display().to_string();
            match std::fs::read_to_string(&path) {
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
                exclude,
                antenna,
            });
        }
        Err(probs)
    }
}

/// Draws one random layout for the scenario with `seed` and returns the layout the map uses:
/// the fixed nodes plus the drawn ones (`add`) or the drawn ones alone (`replace`). Drawn
/// ids are `draw-1`, `draw-2`, …
pub fn layout(sc: &Scenario, spec: &DrawSpec, seed: u64) -> Vec<Node> {
    let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
    let b = sc.grid.bbox();
    let region_box = if spec.include.is_empty() {
        (b.west, b.south, b.east, b.north)
    } else {
        let r = MultiPolygon(spec.include.clone()).bounding_rect().expect("non-empty");
        (r.min().x, r.min().y, r.max().x, r.max().y)
    };
    let corners = [
        (region_box.0, region_box.1),
        (region_box.0, region_box.3),
        (region_box.2, region_box.1),
        (region_box.2, region_box.3),
    ];
    let local: Vec<(f64, f64)> = corners.iter().map(|&(lon, lat)| sc.frame.to_local(lon, lat)).collect();
    let w = Window {
        xmin: local.iter().map(|p| p.0).fold(f64::MAX, f64::min),
        xmax: local.iter().map(|p| p.0).fold(f64::MIN, f64::max),
        ymin: local.iter().map(|p| p.1).fold(f64::MAX, f64::min),
        ymax: local.iter().map(|p| p.1).fold(f64::MIN, f64::max),
    };
    let parent = poisson(&mut rng, spec.density_per_km2 / 1e6 * spec.keep, &w);
    // The process lives in the region: keep parent points inside it, then thin.
    let geo_pts: Vec<(f64, f64)> = parent.iter().map(|p| sc.frame.to_geo(p[0], p[1])).collect();
    let inside: Vec<[f64; 2]> = parent
        .iter()
        .zip(&geo_pts)
        .filter(|(_, g)| {
            let pt = Point::new(g.0, g.1);
            let inc = if spec.include.is_empty() {
                g.0 >= b.west && g.0 <= b.east && g.1 >= b.south && g.1 <= b.north
            } else {
                spec.include.iter().any(|p| p.contains(&pt))
            };
            inc && !spec.exclude.iter().any(|p| p.contains(&pt))
        })
        .map(|(p, _)| *p)
        .collect();
    let pts = if spec.hard_core_m > 0.0 { thin_matern_ii(&mut rng, inside, spec.hard_core_m, &w) } else { inside };
    let fixed_tree = rstar::RTree::bulk_load(
        sc.nodes
            .iter()
            .enumerate()
            .map(|(i, n)| {
                let (x, y) = sc.frame.to_local(n.lon, n.lat);
                GeomWithData::new([x, y], i)
            })
            .collect(),
    );
    let (pattern, power_dbm, height_m, activity) = spec.antenna;
    let drawn = pts.iter().enumerate().map(|(k, p)| {
        let (lon, lat) = sc.frame.to_geo(p[0], p[1]);
        let az = match spec.azimuth {
            Azimuth::Uniform => rng.random_range(0.0..360.0),
            Azimuth::Toward(tlon, tlat) => {
                let (tx, ty) = sc.frame.to_local(tlon, tlat);
                crate::geometry::frame::bearing_deg(tx - p[0], ty - p[1])
            }
            Azimuth::Nearest => fixed_tree.nearest_neighbor(*p).map(|g| sc.nodes[g.data].azimuth_deg).unwrap_or(0.0),
        };
        Node {
            id: format!("draw-{}", k + 1),
            lon,
            lat,
            azimuth_deg: az,
            pattern,
            power_dbm,
            height_m,
            activity,
            peer: None,
            name: None,
        }
    });
    match spec.mode {
        Mode::Add => sc.nodes.iter().cloned().chain(drawn).collect(),
        Mode::Replace => drawn.collect(),
    }
}
