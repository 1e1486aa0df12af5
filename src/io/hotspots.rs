//! `hotspots.geojson`: interference hot spots and outage zones as RFC 7946 polygons.

use crate::geometry::grid::Grid;
use crate::geometry::regions::Region;

/// `hotspots.geojson`: hot spots (`kind = "interference"`) then outage zones (`kind =
/// "outage"`), each with its peak or worst cell and geodesic area.
pub(crate) fn zones_geojson(
    grid: &Grid,
    noise_dbm: f64,
    coverage_target: f64,
    hot: &[crate::jobs::zones::Hotspot],
    outage: &[Region],
) -> geojson::FeatureCollection {
    let round2 = |x: f64| crate::model::units::round_dp(x, 2);
    let feature = |r: &Region, p: serde_json::Map<String, serde_json::Value>| geojson::Feature {
        bbox: None,
        geometry: Some(geojson::Geometry::from(&r.polygon)),
        id: None,
        properties: Some(p),
        foreign_members: None,
    };
    let at = |r: &Region| (grid.lat_of_row(r.peak_cell.0), grid.lon_of_col(r.peak_cell.1));
    let mut features = Vec::with_capacity(hot.len() + outage.len());
    for h in hot {
        let (r, (lat, lon)) = (&h.region, at(&h.region));
        let mut p = serde_json::Map::new();
        p.insert("kind".into(), "interference".into());
        p.insert("peak_i_over_n_db".into(), round2(r.peak_value as f64 - noise_dbm).into());
        p.insert("peak_interference_dbm".into(), round2(r.peak_value as f64).into());
        p.insert("peak_lon".into(), lon.into());
        p.insert("peak_lat".into(), lat.into());
        p.insert("area_m2".into(), round2(r.area_m2).into());
        p.insert("dominant".into(), h.dominant.clone().into());
        p.insert("sub_cell".into(), r.is_sub_cell(grid).into());
        features.push(feature(r, p));
    }
    for r in outage {
        let (lat, lon) = at(r);
        let mut p = serde_json::Map::new();
        p.insert("kind".into(), "outage".into());
        p.insert("min_coverage".into(), ((r.peak_value as f64 * 1e4).round() / 1e4).into());
        p.insert("coverage_target".into(), coverage_target.into());
        p.insert("worst_lon".into(), lon.into());
        p.insert("worst_lat".into(), lat.into());
        p.insert("area_m2".into(), round2(r.area_m2).into());
        p.insert("sub_cell".into(), r.is_sub_cell(grid).into());
        features.push(feature(r, p));
    }
    geojson::FeatureCollection { bbox: None, features, foreign_members: None }
}
