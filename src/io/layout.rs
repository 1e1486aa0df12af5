//! `layout.geojson`: the nodes with every default resolved.

use crate::model::node::Node;

/// Writes nodes as a GeoJSON FeatureCollection with every default resolved, plus `index`
/// (the value used in the `server` layer) and `eirp_dbm`.
pub fn layout_geojson(nodes: &[Node]) -> geojson::FeatureCollection {
    let features = nodes
        .iter()
        .enumerate()
        .map(|(i, n)| {
            let mut p = serde_json::Map::new();
            p.insert("index".into(), i.into());
            p.insert("id".into(), n.id.clone().into());
            if let Some(name) = &n.name {
                p.insert("name".into(), name.clone().into());
            }
            p.insert("azimuth_deg".into(), n.azimuth_deg.into());
            p.insert("pattern".into(), n.pattern.kind().into());
            p.insert("beamwidth_deg".into(), n.pattern.beamwidth_deg().into());
            p.insert("gain_dbi".into(), n.pattern.max_gain_dbi().into());
            if !n.pattern.is_omni() {
                p.insert("sidelobe_dbi".into(), n.pattern.floor_dbi().into());
            }
            p.insert("power_dbm".into(), n.power_dbm.into());
            p.insert("eirp_dbm".into(), n.eirp_dbm().into());
            p.insert("height_m".into(), n.height_m.into());
            p.insert("activity".into(), n.activity.into());
            p.insert("polarisation".into(), n.polarisation.name().into());
            if let Some(peer) = &n.peer {
                p.insert("peer".into(), peer.clone().into());
            }
            geojson::Feature {
                bbox: None,
                geometry: Some(geojson::Geometry::new(geojson::GeometryValue::new_point([n.lon, n.lat]))),
                id: None,
                properties: Some(p),
                foreign_members: None,
            }
        })
        .collect();
    geojson::FeatureCollection { bbox: None, features, foreign_members: None }
}
