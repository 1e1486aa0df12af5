//! Channels and the coupling between an interferer and a victim receiver: co-channel,
//! cross-polar, partially overlapping and adjacent channels.
//!
//! The coupling c (linear, ≤ 1) multiplies the interferer's received power:
//! - channels that overlap: the share of the interferer's bandwidth inside the victim's
//!   (a flat transmit spectrum), 1 for the same channel;
//! - channels that do not overlap: 1/ACIR with 1/ACIR = 1/ACLR + 1/ACS in linear terms
//!   (3GPP TR 36.942 §5 and TR 38.803 §5, from memory), the first adjacent order when the
//!   gap between the channels' edges is less than the victim's bandwidth, the second (if
//!   given) beyond, nothing further; this is the two-point form of ITU-R SM.337's
//!   frequency-dependent rejection, with the masks summarised by ACLR and ACS;
//! - orthogonal polarisations: a further 1/XPD.

use crate::error::ModelError;
use crate::model::node::Polarisation;

/// A named channel.
#[derive(Debug, Clone, PartialEq)]
pub struct Channel {
    /// Name (`[channels]` key; `radio` for the `[radio]` carrier).
    pub name: String,
    /// Centre frequency, GHz.
    pub centre_ghz: f64,
    /// Bandwidth, MHz.
    pub bandwidth_mhz: f64,
}

impl Channel {
    fn edges_ghz(&self) -> (f64, f64) {
        let h = self.bandwidth_mhz / 2000.0;
        (self.centre_ghz - h, self.centre_ghz + h)
    }
}

/// The scenario's channels (index 0: the `[radio]` carrier, named `radio`; then the
/// `[channels]` table in name order) and rejection figures.
#[derive(Debug, Clone, PartialEq)]
pub struct Spectrum {
    /// Every channel a node may name.
    pub channels: Vec<Channel>,
    /// `[spectrum]`.
    pub rejection: Rejection,
}

impl Spectrum {
    /// One channel, the carrier: every node co-channel.
    pub fn single(centre_ghz: f64, bandwidth_mhz: f64) -> Spectrum {
        Spectrum {
            channels: vec![Channel { name: RADIO_CHANNEL.into(), centre_ghz, bandwidth_mhz }],
            rejection: Rejection::default(),
        }
    }

    /// Whether the coupling can differ from 1 between nodes of `used` channels and
    /// polarisations.
    pub fn couples(&self, used: impl Iterator<Item = (usize, Polarisation)>) -> bool {
        let mut first = None;
        for u in used {
            match first {
                None => first = Some(u),
                Some(f) if f != u => return true,
                _ => {}
            }
        }
        false
    }

    /// Coupling between an interferer on channel `tx` with `tx_pol` and a receiver on `rx`
    /// with `rx_pol`.
    pub fn coupling(&self, tx: usize, tx_pol: Polarisation, rx: usize, rx_pol: Polarisation) -> f64 {
        self.rejection.coupling(&self.channels[tx], tx_pol, &self.channels[rx], rx_pol)
    }
}

/// The name of the `[radio]` carrier as a channel.
pub const RADIO_CHANNEL: &str = "radio";

/// The rejection figures of `[spectrum]`, dB.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rejection {
    /// Cross-polar discrimination.
    pub xpd_db: f64,
    /// Adjacent-channel leakage ratio of a transmitter, first adjacent channel.
    pub aclr_db: f64,
    /// Adjacent-channel selectivity of a receiver, first adjacent channel.
    pub acs_db: f64,
    /// Second and further adjacent channels (none: no coupling there).
    pub aclr2_db: Option<f64>,
    /// Receiver selectivity there.
    pub acs2_db: Option<f64>,
}

/// Default cross-polar discrimination, dB (common practice for dual-polarised dishes: 25 to
/// 30 dB on boresight).
pub const DEFAULT_XPD_DB: f64 = 25.0;
/// Default first-adjacent ACLR and ACS, dB (the example values; set them from the
/// equipment's data sheet).
pub const DEFAULT_ACLR_DB: f64 = 30.0;
/// See [`DEFAULT_ACLR_DB`].
pub const DEFAULT_ACS_DB: f64 = 30.0;

impl Default for Rejection {
    fn default() -> Self {
        Rejection {
            xpd_db: DEFAULT_XPD_DB,
            aclr_db: DEFAULT_ACLR_DB,
            acs_db: DEFAULT_ACS_DB,
            aclr2_db: None,
            acs2_db: None,
        }
    }
}

impl Rejection {
    /// Checks every figure: [0, 80] dB, and the second order not below the first.
    pub fn new(
        xpd_db: f64,
        aclr_db: f64,
        acs_db: f64,
        aclr2_db: Option<f64>,
        acs2_db: Option<f64>,
    ) -> Result<Rejection, Vec<ModelError>> {
        let mut errs = Vec::new();
        let ok = |v: f64| v.is_finite() && (0.0..=80.0).contains(&v);
        for (key, v) in [("xpd_db", xpd_db), ("aclr_db", aclr_db), ("acs_db", acs_db)] {
            if !ok(v) {
                errs.push(ModelError::out_of_range(key, v, "[0, 80] dB"));
            }
        }
        for (key, v, first) in [("aclr2_db", aclr2_db, aclr_db), ("acs2_db", acs2_db, acs_db)] {
            if let Some(v) = v
                && !(ok(v) && v >= first)
            {
                errs.push(ModelError::out_of_range(key, v, format!("[{first}, 80] dB (not below the first order)")));
            }
        }
        if aclr2_db.is_some() != acs2_db.is_some() {
            errs.push(ModelError {
                key: if aclr2_db.is_some() { "acs2_db" } else { "aclr2_db" },
                message: "give aclr2_db and acs2_db together (the second adjacent order needs both)".into(),
            });
        }
        if errs.is_empty() { Ok(Rejection { xpd_db, aclr_db, acs_db, aclr2_db, acs2_db }) } else { Err(errs) }
    }

    /// 1/ACIR for ACLR and ACS in dB: 1/ACIR = 1/ACLR + 1/ACS (linear).
    pub fn inverse_acir(aclr_db: f64, acs_db: f64) -> f64 {
        10f64.powf(-aclr_db / 10.0) + 10f64.powf(-acs_db / 10.0)
    }

    /// The coupling (linear) from an interferer on `tx` with polarisation `tx_pol` into a
    /// receiver on `rx` with `rx_pol`.
    pub fn coupling(&self, tx: &Channel, tx_pol: Polarisation, rx: &Channel, rx_pol: Polarisation) -> f64 {
        let (tl, th) = tx.edges_ghz();
        let (rl, rh) = rx.edges_ghz();
        let overlap = th.min(rh) - tl.max(rl);
        let spectral = if overlap > 1e-9 {
            (overlap / (th - tl)).min(1.0)
        } else {
            let gap = -overlap;
            if gap < rx.bandwidth_mhz / 1000.0 - 1e-9 {
                Self::inverse_acir(self.aclr_db, self.acs_db)
            } else {
                match (self.aclr2_db, self.acs2_db) {
                    (Some(l), Some(s)) => Self::inverse_acir(l, s),
                    _ => 0.0,
                }
            }
        };
        let xpd = if tx_pol == rx_pol { 1.0 } else { 10f64.powf(-self.xpd_db / 10.0) };
        spectral * xpd
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use Polarisation::{H, V};

    fn ch(name: &str, f: f64, b: f64) -> Channel {
        Channel { name: name.into(), centre_ghz: f, bandwidth_mhz: b }
    }

    // 1/ACIR = 1/ACLR + 1/ACS (3GPP TR 36.942 and TR 38.803, from memory): with ACLR = ACS =
    // 30 dB, ACIR = 30 − 10 log10 2 = 26.99 dB; with ACLR 45 and ACS 33 dB the ACS dominates
    // (32.734 dB, hand calculation: 10 log10(1/(10^-4.5 + 10^-3.3)) = 10 log10(1/5.3281e-4)).
    #[test]
    fn acir_combines_aclr_and_acs() {
        let acir = |l, s| -10.0 * Rejection::inverse_acir(l, s).log10();
        assert!((acir(30.0, 30.0) - 26.9897).abs() < 1e-4);
        assert!((acir(45.0, 33.0) - 32.7343).abs() < 1e-4, "{}", acir(45.0, 33.0));
    }

    // The 60 GHz channel raster of 2.16 GHz channels (IEEE 802.11ad: 58.32, 60.48, 62.64,
    // 64.80 GHz; common practice): co-channel 1; the next channel first adjacent; two away
    // second adjacent (none unless given); orthogonal polarisation a further 1/XPD.
    #[test]
    fn coupling_on_the_60_ghz_raster() {
        let r = Rejection::default();
        let (a, b, c) = (ch("a", 58.32, 2160.0), ch("b", 60.48, 2160.0), ch("c", 62.64, 2160.0));
        assert_eq!(r.coupling(&a, V, &a, V), 1.0);
        assert!((r.coupling(&a, V, &a, H) - 10f64.powf(-2.5)).abs() < 1e-15);
        assert!((r.coupling(&a, V, &b, V) - Rejection::inverse_acir(30.0, 30.0)).abs() < 1e-15);
        assert_eq!(r.coupling(&a, V, &c, V), 0.0);
        let r2 = Rejection::new(25.0, 30.0, 30.0, Some(50.0), Some(45.0)).unwrap();
        assert!((r2.coupling(&a, V, &c, H) - Rejection::inverse_acir(50.0, 45.0) * 10f64.powf(-2.5)).abs() < 1e-18);
    }

    // Partial overlap: a 2.16 GHz interferer half inside a victim channel couples half its
    // power; a 4.32 GHz bonded channel over a 2.16 GHz victim couples half; the 2.16 GHz
    // victim's own channel inside a bonded victim couples all (flat spectra, hand values).
    #[test]
    fn overlapping_channels_couple_by_shared_bandwidth() {
        let r = Rejection::default();
        let a = ch("a", 58.32, 2160.0);
        let half = ch("h", 59.40, 2160.0);
        let bonded = ch("ab", 59.40, 4320.0);
        assert!((r.coupling(&half, V, &a, V) - 0.5).abs() < 1e-12);
        assert!((r.coupling(&bonded, V, &a, V) - 0.5).abs() < 1e-12);
        assert!((r.coupling(&a, V, &bonded, V) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn bad_rejection_figures_are_refused() {
        assert!(Rejection::new(-1.0, 30.0, 30.0, None, None).is_err());
        assert!(Rejection::new(25.0, 30.0, 30.0, Some(20.0), Some(40.0)).is_err());
        assert!(Rejection::new(25.0, 30.0, 30.0, Some(40.0), None).is_err());
    }
}
