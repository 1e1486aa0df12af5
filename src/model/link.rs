//! The link budget in double precision, written once: geometry between two antennas in the
//! local plane, transmit gain toward the receiver, path loss and received power. Probe,
//! links, the installer sheet and the hot-spot ranking all go through it; the f32 engine is
//! tested against it.
//!
//! Received power P_r = P_t + G_t(φ_t) + G_r(φ_r) − L(d), in dBm, with φ the off-axis angles
//! and d the 3-D slant range (common practice; e.g. the Friis transmission equation in dB).
//!
//! # Units
//! Metres, degrees clockwise from north, dB, dBm, dBi.

use crate::geometry::frame::bearing_deg;
use crate::model::node::Node;
use crate::model::pathloss::PathLoss;

/// The straight path from a transmitting antenna to a receiving one.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Geometry {
    /// East component of the vector from transmitter to receiver, m.
    pub east_m: f64,
    /// North component of that vector, m.
    pub north_m: f64,
    /// 3-D slant range between the antennas, m.
    pub distance_m: f64,
}

impl Geometry {
    /// The path from (`tx_xy`, `tx_height_m`) to (`rx_xy`, `rx_height_m`) in local metres.
    ///
    /// ```
    /// use lobemap::model::link::Geometry;
    /// let g = Geometry::between((0.0, 0.0), 10.0, (30.0, 40.0), 10.0);
    /// assert_eq!(g.distance_m, 50.0);
    /// assert!((g.bearing_from_tx_deg() - 36.8699).abs() < 1e-4);
    /// ```
    pub fn between(tx_xy: (f64, f64), tx_height_m: f64, rx_xy: (f64, f64), rx_height_m: f64) -> Geometry {
        let (east_m, north_m) = (rx_xy.0 - tx_xy.0, rx_xy.1 - tx_xy.1);
        let dz = tx_height_m - rx_height_m;
        Geometry { east_m, north_m, distance_m: (east_m * east_m + north_m * north_m + dz.powi(2)).sqrt() }
    }

    /// Bearing from the transmitter to the receiver, degrees in [0, 360).
    pub fn bearing_from_tx_deg(&self) -> f64 {
        bearing_deg(self.east_m, self.north_m)
    }

    /// Bearing from the receiver to the transmitter, degrees in [0, 360).
    pub fn bearing_from_rx_deg(&self) -> f64 {
        bearing_deg(-self.east_m, -self.north_m)
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
}

impl Budget {
    /// The budget of `tx` as installed (its boresight) along `geometry`.
    pub fn new(pathloss: &PathLoss, tx: &Node, geometry: Geometry) -> Budget {
        let tx_gain_dbi = tx.pattern.gain_dbi(geometry.bearing_from_tx_deg() - tx.azimuth_deg);
        Budget { geometry, power_dbm: tx.power_dbm, tx_gain_dbi, path_loss_db: pathloss.loss_db(geometry.distance_m) }
    }

    /// The budget of `tx` with its main lobe on the receiver (an aligned link).
    pub fn aligned(pathloss: &PathLoss, tx: &Node, geometry: Geometry) -> Budget {
        Budget {
            geometry,
            power_dbm: tx.power_dbm,
            tx_gain_dbi: tx.pattern.max_gain_dbi(),
            path_loss_db: pathloss.loss_db(geometry.distance_m),
        }
    }

    /// Received power with a 0 dBi receiving antenna, dBm.
    pub fn isotropic_dbm(&self) -> f64 {
        self.power_dbm + self.tx_gain_dbi - self.path_loss_db
    }

    /// Received power with a receiving antenna of `rx_gain_dbi` toward the transmitter, dBm.
    pub fn received_dbm(&self, rx_gain_dbi: f64) -> f64 {
        self.power_dbm + self.tx_gain_dbi + rx_gain_dbi - self.path_loss_db
    }
}

/// Gain of `node`'s antenna as installed toward a bearing, dBi.
pub fn gain_toward(node: &Node, bearing_deg: f64) -> f64 {
    node.pattern.gain_dbi(bearing_deg - node.azimuth_deg)
}
