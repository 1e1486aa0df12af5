//! A node of the layout: position, boresight, antenna, power, height, activity, planned peer.

use crate::model::antenna::Pattern;

/// One resolved node: every default applied, every value checked.
#[derive(Debug, Clone, PartialEq)]
pub struct Node {
    /// Unique identifier.
    pub id: String,
    /// Longitude, degrees (WGS84).
    pub lon: f64,
    /// Latitude, degrees (WGS84).
    pub lat: f64,
    /// Boresight azimuth, degrees clockwise from true north, in [0, 360).
    pub azimuth_deg: f64,
    /// Horizontal antenna pattern.
    pub pattern: Pattern,
    /// Conducted transmit power into the antenna, dBm.
    pub power_dbm: f64,
    /// Antenna height above the local ground reference, m.
    pub height_m: f64,
    /// Fraction of time transmitting, [0, 1].
    pub activity: f64,
    /// Id of the node at the other end of its planned link.
    pub peer: Option<String>,
    /// Optional human-readable name carried from the input.
    pub name: Option<String>,
    /// Polarisation of the antenna.
    pub polarisation: Polarisation,
    /// Index of its channel in the scenario's channel list (0: the `[radio]` carrier).
    pub channel: usize,
}

/// Linear polarisation of an antenna.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Polarisation {
    /// Vertical (tilt τ = 90° from the horizontal).
    #[default]
    V,
    /// Horizontal (τ = 0).
    H,
}

impl Polarisation {
    /// The names node files and `[antenna]` use.
    pub const NAMES: &'static str = "`V` (vertical) or `H` (horizontal)";

    /// From `V` or `H`.
    pub fn parse(s: &str) -> Option<Polarisation> {
        match s {
            "V" => Some(Polarisation::V),
            "H" => Some(Polarisation::H),
            _ => None,
        }
    }

    /// `V` or `H`.
    pub fn name(self) -> &'static str {
        match self {
            Polarisation::V => "V",
            Polarisation::H => "H",
        }
    }

    /// cos 2τ of the tilt τ from the horizontal (ITU-R P.838-3 eqs. 4, 5): −1 vertical, 1
    /// horizontal.
    pub fn cos_2tau(self) -> f64 {
        match self {
            Polarisation::V => -1.0,
            Polarisation::H => 1.0,
        }
    }
}

impl Node {
    /// Effective isotropic radiated power on boresight, dBm.
    pub fn eirp_dbm(&self) -> f64 {
        self.power_dbm + self.pattern.max_gain_dbi()
    }
}

/// The planned links as (from, to) indices: every node naming an existing `peer`, in node
/// order (a mutual pair appears in both directions).
pub fn peer_pairs(nodes: &[Node]) -> Vec<(usize, usize)> {
    let index: std::collections::HashMap<&str, usize> =
        nodes.iter().enumerate().map(|(i, n)| (n.id.as_str(), i)).collect();
    nodes
        .iter()
        .enumerate()
        .filter_map(|(i, n)| n.peer.as_deref().and_then(|p| index.get(p)).map(|&j| (i, j)))
        .collect()
}

/// The planned links as unordered pairs (lower index first), each once, sorted.
pub fn peer_links(nodes: &[Node]) -> Vec<(usize, usize)> {
    let mut v: Vec<(usize, usize)> = peer_pairs(nodes).into_iter().map(|(i, j)| (i.min(j), i.max(j))).collect();
    v.sort_unstable();
    v.dedup();
    v
}
