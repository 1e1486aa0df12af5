//! The node layout: GeoJSON Point features with per-node antenna properties.
//!
//! Coordinates follow RFC 7946 ([lon, lat] on WGS84). Each feature carries `id` (unique,
//! string or number), `azimuth_deg` (boresight, degrees clockwise from true north; required
//! unless the pattern is omni), optional overrides of every `[antenna]` key and `peer` (id of
//! the node at the other end of its planned link). `name`, `note` and keys beginning with
//! `x_` are carried along untouched; any other key is rejected as a probable typo.

use crate::config::antenna::AntennaDefaults;
use crate::config::range::Range;
use crate::error::{Problem, Problems};
use crate::model::node::{Node, Polarisation};
use serde_json::Value;

/// Property keys a node feature may carry. `index` and `eirp_dbm` are what lobemap writes
/// into a resolved layout (`layout.geojson`, `draw`): `index` is informational, `eirp_dbm`
/// is checked against power and gain, so a layout lobemap wrote reads back unchanged.
pub const NODE_KEYS: &[&str] = &[
    "id",
    "azimuth_deg",
    "pattern",
    "beamwidth_deg",
    "gain_dbi",
    "sidelobe_dbi",
    "power_dbm",
    "height_m",
    "activity",
    "polarisation",
    "channel",
    "locked",
    "allowed_channels",
    "allowed_polarisations",
    "peer",
    "name",
    "note",
    "index",
    "eirp_dbm",
];

/// Parses a GeoJSON text of nodes. `file` names the file in messages; `defaults` are the
/// scenario's `[antenna]` values. All problems are collected.
pub fn parse_nodes(
    text: &str,
    file: &str,
    defaults: &AntennaDefaults,
    channels: &[String],
) -> Result<Vec<Node>, Vec<Problem>> {
    let mut probs = Problems::default();
    let gj: geojson::GeoJson = match text.parse() {
        Ok(g) => g,
        Err(e) => return Err(vec![Problem::new(file, None, "(document)", format!("not valid GeoJSON: {e}"))]),
    };
    let fc = match gj {
        geojson::GeoJson::FeatureCollection(fc) => fc,
        _ => {
            return Err(vec![Problem::new(
                file,
                None,
                "type",
                "expected a GeoJSON FeatureCollection of Point features",
            )]);
        }
    };
    if fc.features.is_empty() {
        return Err(vec![Problem::new(
            file,
            None,
            "features",
            "the FeatureCollection has no features; at least one node is needed",
        )]);
    }
    // Parsed nodes keep their feature index, so messages name the feature as written even
    // when earlier features were rejected.
    let mut nodes = Vec::with_capacity(fc.features.len());
    let mut feature_of = Vec::with_capacity(fc.features.len());
    for (i, f) in fc.features.iter().enumerate() {
        if let Some(n) = parse_feature(i, f, file, defaults, channels, &mut probs) {
            nodes.push(n);
            feature_of.push(i);
        }
    }
    // Ids of the features that were rejected: a peer naming one exists, it is just not valid.
    let rejected: std::collections::HashSet<String> = fc
        .features
        .iter()
        .enumerate()
        .filter(|(i, _)| !feature_of.contains(i))
        .filter_map(|(_, f)| feature_id(f))
        .collect();
    // Unique ids and peers that resolve.
    let mut seen: std::collections::HashMap<&str, usize> = std::collections::HashMap::new();
    for (k, n) in nodes.iter().enumerate() {
        let i = feature_of[k];
        if let Some(first) = seen.insert(n.id.as_str(), i) {
            probs.push(Problem::new(
                file,
                Some(format!("feature {i} (id {})", n.id)),
                "id",
                format!("duplicate id `{}` (first used by feature {first}); ids must be unique", n.id),
            ));
            seen.insert(n.id.as_str(), first);
        }
    }
    let index_of: std::collections::HashMap<&str, usize> =
        nodes.iter().enumerate().rev().map(|(k, n)| (n.id.as_str(), k)).collect();
    for (k, n) in nodes.iter().enumerate() {
        let i = feature_of[k];
        if let Some(p) = &n.peer {
            let feat = Some(format!("feature {i} (id {})", n.id));
            if p == &n.id {
                probs.push(Problem::new(
                    file,
                    feat,
                    "peer",
                    format!("node `{p}` names itself as its peer; name another node's id"),
                ));
            } else if let Some(&j) = index_of.get(p.as_str()) {
                let m = &nodes[j];
                if (m.lon - n.lon).abs() < 1e-9 && (m.lat - n.lat).abs() < 1e-9 {
                    probs.push(Problem::new(
                        file,
                        feat.clone(),
                        "peer",
                        format!("peer `{p}` stands at the same spot; a link needs two positions"),
                    ));
                }
                // Both ends of a link on one channel and polarisation (reported once a pair).
                let once = k < j || m.peer.as_deref() != Some(n.id.as_str());
                if once && m.channel != n.channel {
                    probs.push(Problem::new(
                        file,
                        feat.clone(),
                        "channel",
                        format!(
                            "value `{}` differs from its peer `{p}`'s `{}`; both ends of a link work on one channel",
                            channels[n.channel], channels[m.channel]
                        ),
                    ));
                }
                if once && m.polarisation != n.polarisation {
                    probs.push(Problem::new(
                        file,
                        feat,
                        "polarisation",
                        format!(
                            "value `{}` differs from its peer `{p}`'s `{}`; both ends of a link use one polarisation",
                            n.polarisation.name(),
                            m.polarisation.name()
                        ),
                    ));
                }
            } else if rejected.contains(p) {
                probs.push(Problem::new(
                    file,
                    feat,
                    "peer",
                    format!("value `{p}` names a node that has problems of its own (listed for its feature)"),
                ));
            } else {
                probs.push(Problem::new(file, feat, "peer", format!("value `{p}` names no node in this file")));
            }
        }
    }
    // A node with activity 0 never transmits: it cannot be the sending end of a planned link,
    // and a layout in which no node transmits has nothing to compute.
    for (k, n) in nodes.iter().enumerate() {
        let i = feature_of[k];
        if n.activity == 0.0
            && let Some(p) = &n.peer
        {
            probs.push(Problem::new(
                file,
                Some(format!("feature {i} (id {})", n.id)),
                "activity",
                format!(
                    "value 0 means the node never transmits, but it names peer `{p}`, which makes it the sending end of a planned link; give an activity in (0, 1] or remove `peer`"
                ),
            ));
        }
    }
    if !nodes.is_empty() && nodes.len() == fc.features.len() && nodes.iter().all(|n| n.activity == 0.0) {
        probs.push(Problem::new(
            file,
            None,
            "activity",
            "every node has activity 0, so none transmits; at least one node needs an activity in (0, 1]",
        ));
    }
    if nodes.len() != fc.features.len() || !probs.is_empty() {
        // Some features were rejected outright; their problems are already recorded.
        return Err(probs.0);
    }
    Ok(nodes)
}

/// A feature's id as written (property `id`, else the feature id), if it has one.
fn feature_id(f: &geojson::Feature) -> Option<String> {
    match f.properties.as_ref().and_then(|p| p.get("id")) {
        Some(Value::String(s)) => Some(s.clone()),
        Some(Value::Number(n)) => Some(n.to_string()),
        Some(_) => None,
        None => match &f.id {
            Some(geojson::feature::Id::String(s)) => Some(s.clone()),
            Some(geojson::feature::Id::Number(n)) => Some(n.to_string()),
            None => None,
        },
    }
}

fn parse_feature(
    i: usize,
    f: &geojson::Feature,
    file: &str,
    d: &AntennaDefaults,
    channels: &[String],
    probs: &mut Problems,
) -> Option<Node> {
    let props = f.properties.clone().unwrap_or_default();
    let exact = |n: &serde_json::Number| (n.is_u64() || n.is_i64()).then(|| n.to_string());
    let inexact = |n: &serde_json::Number| {
        Problem::new(
            file,
            Some(format!("feature {i}")),
            "id",
            format!("value {n} is not an integer that compares exactly (within ±2^63); write such an id as a string"),
        )
    };
    let id = match props.get("id").or(None) {
        Some(Value::String(s)) if !s.trim().is_empty() => Some(s.clone()),
        Some(Value::Number(n)) if exact(n).is_some() => exact(n),
        Some(Value::Number(n)) => {
            probs.push(inexact(n));
            None
        }
        Some(v) => {
            probs.push(Problem::new(
                file,
                Some(format!("feature {i}")),
                "id",
                format!("value {v} is not a non-empty string or a number"),
            ));
            None
        }
        None => match &f.id {
            Some(geojson::feature::Id::String(s)) => Some(s.clone()),
            Some(geojson::feature::Id::Number(n)) if exact(n).is_some() => exact(n),
            Some(geojson::feature::Id::Number(n)) => {
                probs.push(inexact(n));
                None
            }
            None => {
                probs.push(Problem::new(
                    file,
                    Some(format!("feature {i}")),
                    "id",
                    "missing; every node needs a unique id (string or number)",
                ));
                None
            }
        },
    };
    let feat = match &id {
        Some(id) => format!("feature {i} (id {id})"),
        None => format!("feature {i}"),
    };
    // Ids go into tables, labels and messages as written: the CSV writer quotes commas and
    // quotes, but a line break or another control character would break a line of any of them.
    if let Some(id) = &id
        && id.chars().any(|c| c.is_control())
    {
        probs.push(Problem::new(
            file,
            Some(feat.clone()),
            "id",
            format!("value {id:?} has a control character (a line break or a tab); ids may not contain them"),
        ));
    }
    let before = probs.0.len();
    let mut push = |field: &str, msg: String| probs.push(Problem::new(file, Some(feat.clone()), field, msg));

    for k in props.keys() {
        if !NODE_KEYS.contains(&k.as_str()) && !k.starts_with("x_") {
            push(k, format!("unknown property; allowed: {} (or any key starting with `x_`)", NODE_KEYS.join(", ")));
        }
    }
    let (lon, lat) = match f.geometry.as_ref().map(|g| &g.value) {
        Some(geojson::GeometryValue::Point { coordinates: c }) if c.len() >= 2 => (c[0], c[1]),
        Some(g) => {
            push("geometry", format!("is a {}, expected a Point [lon, lat]", g.type_name()));
            (0.0, 0.0)
        }
        None => {
            push("geometry", "missing; expected a Point [lon, lat]".into());
            (0.0, 0.0)
        }
    };
    if !(lon.is_finite() && (-180.0..=180.0).contains(&lon)) {
        push("geometry", format!("longitude {lon} is outside [-180, 180]"));
    }
    if !(lat.is_finite() && (-85.0..=85.0).contains(&lat)) {
        push("geometry", format!("latitude {lat} is outside [-85, 85] (polar regions are not supported)"));
    }
    let mut num = |key: &str, range: Option<&Range>| -> Option<f64> {
        match props.get(key) {
            None | Some(Value::Null) => None,
            Some(Value::Number(n)) => {
                let v = n.as_f64().unwrap_or(f64::NAN);
                if let Some(r) = range
                    && !r.contains(v)
                {
                    push(key, format!("value {v} is outside the allowed range {r}"));
                }
                Some(v)
            }
            Some(v) => {
                push(key, format!("value {v} is not a number"));
                None
            }
        }
    };
    let az = num("azimuth_deg", Some(&Range::closed(-360.0, 360.0, "deg")));
    let eirp = num("eirp_dbm", None);
    let _index = num("index", Some(&Range::closed(0.0, 1e9, "")));
    let local = AntennaDefaults {
        pattern: None,
        beamwidth_deg: num("beamwidth_deg", Some(&Range::BEAMWIDTH)),
        gain_dbi: num("gain_dbi", Some(&Range::GAIN)),
        sidelobe_dbi: num("sidelobe_dbi", Some(&Range::SIDELOBE)),
        power_dbm: num("power_dbm", Some(&Range::POWER)),
        height_m: num("height_m", Some(&Range::HEIGHT)),
        activity: num("activity", Some(&Range::ACTIVITY)),
        polarisation: None,
    };
    let mut text = |key: &str| -> Option<String> {
        match props.get(key) {
            None | Some(Value::Null) => None,
            Some(Value::String(s)) => Some(s.clone()),
            Some(Value::Number(n)) if key == "peer" => Some(n.to_string()),
            Some(v) => {
                push(key, format!("value {v} is not a string"));
                None
            }
        }
    };
    let pattern_name = text("pattern");
    let peer = text("peer");
    let name = text("name");
    let pol_name = text("polarisation");
    // The channel names a node may give, for the messages of `channel` and `allowed_channels`.
    let channel_names: Vec<String> = channels.iter().map(|n| format!("`{n}`")).collect();
    let channel_names = format!("{} ([channels] names, `radio` for the [radio] carrier)", channel_names.join(", "));
    let channel = match text("channel") {
        None => 0,
        Some(c) => channels.iter().position(|n| *n == c).unwrap_or_else(|| {
            push("channel", format!("value `{c}` names no channel; allowed: {channel_names}"));
            0
        }),
    };
    let merged = AntennaDefaults {
        pattern: pattern_name.or_else(|| d.pattern.clone()),
        beamwidth_deg: local.beamwidth_deg.or(d.beamwidth_deg),
        gain_dbi: local.gain_dbi.or(d.gain_dbi),
        sidelobe_dbi: local.sidelobe_dbi.or(d.sidelobe_dbi),
        power_dbm: local.power_dbm.or(d.power_dbm),
        height_m: local.height_m.or(d.height_m),
        activity: local.activity.or(d.activity),
        polarisation: None,
    };
    // A bad `[antenna]` default is reported once, by the scenario's check.
    let polarisation = match pol_name.as_deref() {
        None => d.polarisation.as_deref().and_then(Polarisation::parse).unwrap_or_default(),
        Some(s) => Polarisation::parse(s).unwrap_or_else(|| {
            push("polarisation", format!("value `{s}` is not {}", Polarisation::NAMES));
            Polarisation::default()
        }),
    };
    if let Some(v) = props.get("locked")
        && !v.is_boolean()
    {
        push("locked", format!("value {v} is not true or false"));
    }
    // What `assign` may give the node: lists of names, checked here for every command.
    let list_of = |key: &str, known: &dyn Fn(&str) -> bool, allowed: &str| -> Option<String> {
        let v = props.get(key)?;
        let names: Option<Vec<&str>> = v.as_array().and_then(|a| a.iter().map(Value::as_str).collect());
        match names {
            Some(n) if !n.is_empty() && n.iter().all(|x| known(x)) => None,
            Some(n) if !n.is_empty() => {
                let bad: Vec<&str> = n.into_iter().filter(|x| !known(x)).collect();
                Some(format!("value {v} names {}, which is not allowed; allowed: {allowed}", bad.join(", ")))
            }
            _ => Some(format!("value {v} is not a non-empty list of names; allowed names: {allowed}")),
        }
    };
    if let Some(m) = list_of("allowed_channels", &|x| channels.iter().any(|c| c == x), &channel_names) {
        push("allowed_channels", m);
    }
    if let Some(m) = list_of("allowed_polarisations", &|x| Polarisation::parse(x).is_some(), Polarisation::NAMES) {
        push("allowed_polarisations", m);
    }
    let resolved = merged.resolve(&mut |field, msg| push(field, msg));
    let azimuth_deg = match (az, &resolved) {
        (Some(a), _) => a.rem_euclid(360.0),
        (None, Some((p, ..))) if p.is_omni() => 0.0,
        (None, Some(_)) => {
            push(
                "azimuth_deg",
                "missing; required unless the pattern is omni (degrees clockwise from true north, [0, 360))".into(),
            );
            0.0
        }
        (None, None) => 0.0,
    };
    if let (Some(e), Some((p, power, ..))) = (eirp, &resolved) {
        let want = power + p.max_gain_dbi();
        if (e - want).abs() > 0.005 {
            push(
                "eirp_dbm",
                format!(
                    "value {e} disagrees with power_dbm + gain_dbi = {want} dBm; correct it or leave it out (it is derived)"
                ),
            );
        }
    }
    if probs.0.len() > before {
        return None;
    }
    let (pattern, power_dbm, height_m, activity) = resolved?;
    Some(Node {
        id: id?,
        lon,
        lat,
        azimuth_deg,
        pattern,
        power_dbm,
        height_m,
        activity,
        peer,
        name,
        polarisation,
        channel,
    })
}
