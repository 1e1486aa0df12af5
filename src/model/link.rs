//! The link budget in double precision, written once: geometry between two antennas in the
//! local plane, transmit gain toward the receiver, path loss and received power. Probe,
//! links, the installer sheet and the hot-spot ranking all go through it; the f32 engine is
//! tested against it.
//!
//! Received power P_r = P_t + G_t(φ_t) + G_r(φ_r) − L(d) − A, in dBm, with φ the off-axis
//! angles, d the 3-D slant range (common practice; e.g. the Friis transmission equation in dB)
//! and A the obstruction loss of the surface ([`crate::model::obstruction`]), 0 without one.
//!
//! # Units
//! Metres, degrees clockwise from north, dB, dBm, dBi.

use crate::geometry::frame::{LocalFrame, bearing_deg};
use crate::model::node::Node;
use crate::model::pathloss::PathLoss;

/// One end of a path: local position, antenna height, and the plane bearing of true north
/// there ([`LocalFrame::north_deg`]), so that bearings are reported from true north at the
/// end itself.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Endpoint {
    /// Local east and north, m.
    pub xy: (f64, f64),
    /// Antenna height, m.
    pub height_m: f64,
    /// Plane bearing of true north at the point, degrees.
    pub north_deg: f64,
}

impl Endpoint {
    /// The end at (`lon`, `lat`) and `height_m` in `frame`.
    pub fn at(frame: &LocalFrame, lon: f64, lat: f64, height_m: f64) -> Endpoint {
        Endpoint { xy: frame.to_local(lon, lat), height_m, north_deg: frame.north_deg(lon, lat) }
    }
}

/// The straight path from a transmitting antenna to a receiving one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Geometry {
    /// East component of the vector from transmitter to receiver, m.
    pub east_m: f64,
    /// North component of that vector, m.
    pub north_m: f64,
    /// 3-D slant range between the antennas, m.
    pub distance_m: f64,
    /// True azimuth from the transmitter to the receiver, degrees in [0, 360).
    pub bearing_from_tx_deg: f64,
    /// True azimuth from the receiver to the transmitter, degrees in [0, 360).
    pub bearing_from_rx_deg: f64,
}

impl Geometry {
    /// The path from `tx` to `rx`; bearings from true north at each end.
    ///
    /// ```
    /// use lobemap::model::link::{Endpoint, Geometry};
    /// let a = Endpoint { xy: (0.0, 0.0), height_m: 10.0, north_deg: 0.0 };
    /// let b = Endpoint { xy: (30.0, 40.0), height_m: 10.0, north_deg: 0.0 };
    /// let g = Geometry::between(&a, &b);
    /// assert_eq!(g.distance_m, 50.0);
    /// assert!((g.bearing_from_tx_deg - 36.8699).abs() < 1e-4);
    /// ```
    pub fn between(tx: &Endpoint, rx: &Endpoint) -> Geometry {
        let (east_m, north_m) = (rx.xy.0 - tx.xy.0, rx.xy.1 - tx.xy.1);
        let dz = tx.height_m - rx.height_m;
        Geometry {
            east_m,
            north_m,
            distance_m: (east_m * east_m + north_m * north_m + dz.powi(2)).sqrt(),
            bearing_from_tx_deg: (bearing_deg(east_m, north_m) - tx.north_deg).rem_euclid(360.0),
            bearing_from_rx_deg: (bearing_deg(-east_m, -north_m) - rx.north_deg).rem_euclid(360.0),
        }
    }

    /// The same path with the bearings given (e.g. geodesic azimuths of a long link).
    pub fn with_bearings(self, from_tx_deg: f64, from_rx_deg: f64) -> Geometry {
        Geometry { bearing_from_tx_deg: from_tx_deg, bearing_from_rx_deg: from_rx_deg, ..self }
    }
}

/// The transmit side of one path: everything but the receiving antenna's gain.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Budget {
    /// The path.
    pub geometry: Geometry,
    /// Conducted transmit power, dBm.
    pub power_dbm: f64,
    /// Transmit gain toward the receiver, dBi.
    pub tx_gain_dbi: f64,
    /// Path loss, dB.
    pub path_loss_db: f64,
    /// Loss by obstruction of the surface (diffraction), dB; 0 with no surface.
    pub obstruction_db: f64,
}

impl Budget {
    /// The budget of `tx` as installed (its boresight) along `geometry`.
    pub fn new(pathloss: &PathLoss, tx: &Node, geometry: Geometry) -> Budget {
        let tx_gain_dbi = tx.pattern.gain_dbi(geometry.bearing_from_tx_deg - tx.azimuth_deg);
        Budget {
            geometry,
            power_dbm: tx.power_dbm,
            tx_gain_dbi,
            path_loss_db: pathloss.loss_db(geometry.distance_m),
            obstruction_db: 0.0,
        }
    }

    /// The same budget with an obstruction loss of `db`.
    pub fn obstructed(self, db: f64) -> Budget {
        Budget { obstruction_db: db, ..self }
    }

    /// The budget of `tx` with its main lobe on the receiver (an aligned link).
    pub fn aligned(pathloss: &PathLoss, tx: &Node, geometry: Geometry) -> Budget {
        Budget {
            geometry,
            power_dbm: tx.power_dbm,
            tx_gain_dbi: tx.pattern.max_gain_dbi(),
            path_loss_db: pathloss.loss_db(geometry.distance_m),
            obstruction_db: 0.0,
        }
    }

    /// Received power with a 0 dBi receiving antenna, dBm.
    pub fn isotropic_dbm(&self) -> f64 {
        self.power_dbm + self.tx_gain_dbi - self.path_loss_db - self.obstruction_db
    }

    /// Received power with a receiving antenna of `rx_gain_dbi` toward the transmitter, dBm.
    pub fn received_dbm(&self, rx_gain_dbi: f64) -> f64 {
        self.power_dbm + self.tx_gain_dbi + rx_gain_dbi - self.path_loss_db - self.obstruction_db
    }
}

/// Gain of `node`'s antenna as installed toward a bearing, dBi.
pub fn gain_toward(node: &Node, bearing_deg: f64) -> f64 {
    node.pattern.gain_dbi(bearing_deg - node.azimuth_deg)
}
