//! The random field's parameters as given on the command line or taken from a scenario,
//! validated into a [`Field`].

use crate::model::antenna::GainLaw;
use crate::model::units::dbm_to_mw;
use crate::random::field::Field;

/// Raw field parameters as given on the command line or taken from a scenario; [`Self::build`]
/// validates them.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FieldSpec {
    /// Interferer pattern: `sector`, `parabolic` or `omni` (its lobes in `tx`).
    pub tx_pattern: String,
    /// Parent density, per km².
    pub density_per_km2: f64,
    /// Independent retention probability.
    pub keep: f64,
    /// Matérn II hard core, m.
    pub hard_core_m: f64,
    /// Guard radius, m.
    pub guard_m: f64,
    /// Outer radius, m.
    pub radius_m: f64,
    /// Transmit power, dBm.
    pub power_dbm: f64,
    /// Interferer (beamwidth, gain, side lobe).
    pub tx: (f64, f64, f64),
    /// Receiver (beamwidth, gain, side lobe).
    pub rx: (f64, f64, f64),
    /// Fading law name: none, rayleigh, nakagami, rician.
    pub fading: String,
    /// Nakagami m.
    pub m: f64,
    /// Rician K, dB.
    pub k_db: f64,
    /// Path-loss model name.
    pub model: String,
    /// Exponent.
    pub exponent: f64,
    /// Loss at 1 m (power-law).
    pub loss_at_1m_db: f64,
    /// Frequency, GHz.
    pub frequency_ghz: f64,
    /// Absorption, dB/km.
    pub absorption_db_per_km: f64,
    /// Minimum distance, m.
    pub min_distance_m: f64,
    /// Blockage by buildings, if on.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub blockage: Option<BlockageSpec>,
}

/// Blockage of the random field's links ([`crate::random::field::Blockage`]) as given or
/// derived.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct BlockageSpec {
    /// β of P(LOS) = e^{−βr}, per m.
    pub beta_per_m: f64,
    /// Exponent of the blocked links' close-in law.
    pub nlos_exponent: f64,
    /// Where β came from: `flag` or `footprints`.
    pub source: String,
    /// β derived from the scenario's footprints and the line-of-sight fraction measured on
    /// them, when the scenario has footprints.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub site: Option<crate::random::blockage::SiteBlockage>,
}

/// Default exponent of blocked links: the close-in model's urban-microcell NLOS fit at
/// 28 GHz, n = 3.19 (Sun et al., IEEE Trans. Veh. Technol. 65(5), 2016; from memory).
pub const NLOS_EXPONENT: f64 = 3.19;

impl FieldSpec {
    /// Checks every value and builds the field; problems name the command-line flag.
    pub fn build(&self) -> Result<Field, crate::Error> {
        use crate::config::range::Range;
        use crate::error::{Problem, Problems};
        let mut p = Problems::default();
        let mut chk = |flag: &str, v: f64, r: Range| {
            if !r.contains(v) {
                p.push(Problem::new(
                    "(command line)",
                    None,
                    flag,
                    format!("value {v} is outside the allowed range {r}"),
                ));
            }
        };
        chk("--density-per-km2", self.density_per_km2, Range::left_open(0.0, 1e7, "per km²"));
        chk("--keep", self.keep, Range::left_open(0.0, 1.0, ""));
        chk("--hard-core-m", self.hard_core_m, Range::closed(0.0, 10_000.0, "m"));
        chk("--radius-m", self.radius_m, Range::left_open(0.0, 1e6, "m"));
        chk("--guard-m", self.guard_m, Range::closed(0.0, self.radius_m.max(0.0), "m (below --radius-m)"));
        chk("--power-dbm", self.power_dbm, Range::POWER);
        chk("--beamwidth-deg", self.tx.0, Range::BEAMWIDTH);
        chk("--gain-dbi", self.tx.1, Range::GAIN);
        chk("--sidelobe-dbi", self.tx.2, Range::closed(-60.0, self.tx.1, "dBi (not above --gain-dbi)"));
        chk("--rx-beamwidth-deg", self.rx.0, Range::BEAMWIDTH);
        chk("--rx-gain-dbi", self.rx.1, Range::GAIN);
        chk("--rx-sidelobe-dbi", self.rx.2, Range::closed(-60.0, self.rx.1, "dBi (not above --rx-gain-dbi)"));
        let nlos = self.blockage.as_ref().and_then(|b| {
            chk("--los-beta-per-m", b.beta_per_m, Range::left_open(0.0, 1.0, "per m"));
            let lo = if self.model == "free-space" { 2.0 } else { self.exponent.max(2.0) };
            chk("--nlos-exponent", b.nlos_exponent, Range::closed(lo, 8.0, "(not below the line-of-sight exponent)"));
            crate::model::pathloss::CloseIn::new(b.nlos_exponent).ok().and_then(|law| {
                crate::model::pathloss::PathLoss::new(
                    law,
                    self.frequency_ghz,
                    self.absorption_db_per_km,
                    self.min_distance_m,
                )
                .ok()
            })
        });
        // Interferers per realisation grow with density × area: refuse what would not fit.
        let reach = self.radius_m + self.hard_core_m;
        let per_realisation = self.density_per_km2 * self.keep * std::f64::consts::PI * reach * reach / 1e6;
        if per_realisation > MAX_INTERFERERS {
            p.push(Problem::flag(
                "--density-per-km2",
                format!(
                    "value {} on a {reach} m disc means about {per_realisation:.0} interferers per realisation; at most {MAX_INTERFERERS:.0}: lower the density or --radius-m",
                    self.density_per_km2
                ),
            ));
        }
        if self.guard_m >= self.radius_m {
            p.push(Problem::new(
                "(command line)",
                None,
                "--guard-m",
                format!("value {} must be below --radius-m {}", self.guard_m, self.radius_m),
            ));
        }
        let fading = crate::model::fading::Fading::from_name(&self.fading, Some(self.m), Some(self.k_db))
            .map_err(|e| {
                let flag = match e.key {
                    "m" => "--m",
                    "k_db" => "--k-db",
                    _ => "--fading",
                };
                p.push(Problem::flag(flag, e.message))
            })
            .ok();
        // Only the parameters the named law takes are passed (the others have defaults).
        use crate::model::pathloss::{LAWS, LawParams, PathLoss};
        let takes = |k: &str| LAWS.iter().any(|e| e.name == self.model && e.takes.contains(&k));
        let params = LawParams {
            exponent: takes("exponent").then_some(self.exponent),
            loss_at_1m_db: takes("loss_at_1m_db").then_some(self.loss_at_1m_db),
        };
        let pl = PathLoss::from_name(
            &self.model,
            &params,
            self.frequency_ghz,
            self.absorption_db_per_km,
            self.min_distance_m,
        )
        .map_err(|e| {
            for q in e {
                p.push(Problem::flag(flag_of(q.key), q.message));
            }
        })
        .ok();
        if pl.is_some() && self.exponent <= 2.0 && self.model != "free-space" && self.radius_m > 1e5 {
            p.push(Problem::new(
                "(command line)",
                None,
                "--exponent",
                "with exponent ≤ 2 the aggregate grows without bound with the radius; keep --radius-m at most 100 km",
            ));
        }
        // The interferers' antenna enters through its gain law under uniform orientation.
        let tx_law = match self.tx_pattern.as_str() {
            "sector" | "omni" => Some(GainLaw::two_level(self.tx.0 / 360.0, self.tx.1, self.tx.2)),
            "parabolic" => crate::model::antenna::Pattern::parabolic(self.tx.0, self.tx.1, self.tx.2)
                .map(|p| p.orientation_law())
                .ok(),
            other => {
                p.push(Problem::flag(
                    "--pattern",
                    format!("value `{other}` is not one of `sector`, `parabolic`, `omni`"),
                ));
                None
            }
        };
        p.into_result()?;
        let (Some(fading), Some(pathloss), Some(tx_law)) = (fading, pl, tx_law) else {
            unreachable!("problems were recorded")
        };
        let blockage = match (&self.blockage, nlos) {
            (Some(b), Some(nlos)) => Some(crate::random::field::Blockage { beta_per_m: b.beta_per_m, nlos }),
            _ => None,
        };
        Ok(Field {
            density_per_m2: self.density_per_km2 / 1e6,
            keep: self.keep,
            hard_core_m: self.hard_core_m,
            guard_m: self.guard_m,
            radius_m: self.radius_m,
            power_mw: dbm_to_mw(self.power_dbm),
            tx: tx_law,
            rx: GainLaw::two_level(self.rx.0 / 360.0, self.rx.1, self.rx.2),
            fading,
            pathloss,
            blockage,
        })
    }

    /// Applies one sweep value: `beamwidth_deg` (interferers, and the receiver when it is
    /// directional), `sidelobe_dbi` (likewise), `density_per_km2` or `k_db` (Rician).
    pub fn with(&self, key: &str, v: f64) -> Result<FieldSpec, String> {
        let mut s = self.clone();
        match key {
            "beamwidth_deg" => {
                s.tx.0 = v;
                if s.rx.0 < 360.0 {
                    s.rx.0 = v;
                }
            }
            "sidelobe_dbi" => {
                s.tx.2 = v;
                if s.rx.0 < 360.0 {
                    s.rx.2 = v;
                }
            }
            "density_per_km2" => s.density_per_km2 = v,
            "k_db" => {
                s.fading = "rician".into();
                s.k_db = v;
            }
            other => {
                return Err(format!(
                    "unknown sweep key `{other}`; allowed: beamwidth_deg, sidelobe_dbi, density_per_km2, k_db"
                ));
            }
        }
        Ok(s)
    }
}

/// Blockage from the flags, or from the scenario's footprints: β = λ_b E[perimeter]/π of the
/// footprints with the measured line-of-sight fraction beside it (seed 1).
fn blockage_of(sc: Option<&crate::model::scenario::Scenario>, a: &FieldOverrides) -> Option<BlockageSpec> {
    let site = sc.and_then(|s| s.surface().and_then(|surf| crate::random::blockage::site_blockage(surf, s.frame(), 1)));
    let nlos_exponent = a.nlos_exponent.unwrap_or(NLOS_EXPONENT);
    match (a.los_beta_per_m, site) {
        (Some(beta_per_m), site) => Some(BlockageSpec { beta_per_m, nlos_exponent, source: "flag".into(), site }),
        (None, Some(site)) => Some(BlockageSpec {
            beta_per_m: site.beta_per_m,
            nlos_exponent,
            source: "footprints".into(),
            site: Some(site),
        }),
        (None, None) => None,
    }
}

/// Most interferers per Monte Carlo realisation (about 40 bytes each, per thread).
pub const MAX_INTERFERERS: f64 = 2e7;

/// The command-line flag of a model parameter.
fn flag_of(key: &str) -> &'static str {
    match key {
        "exponent" => "--exponent",
        "loss_at_1m_db" => "--loss-at-1m-db",
        "frequency_ghz" => "--frequency-ghz",
        "absorption_db_per_km" => "--absorption-db-per-km",
        "min_distance_m" => "--min-distance-m",
        _ => "--model",
    }
}

/// What the user gave for a random field (flags), each value optional: unset values come
/// from the scenario, if any, then from the defaults (radius and guard always come from
/// here).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct FieldOverrides {
    /// Interferer density before thinning, per km².
    pub density_per_km2: Option<f64>,
    /// Independent retention probability.
    pub keep: Option<f64>,
    /// Matérn II hard-core distance, m.
    pub hard_core_m: Option<f64>,
    /// Outer radius, m.
    pub radius_m: f64,
    /// Guard radius, m.
    pub guard_m: f64,
    /// Interferer transmit power, dBm.
    pub power_dbm: Option<f64>,
    /// Interferer main-lobe width, degrees.
    pub beamwidth_deg: Option<f64>,
    /// Interferer main-lobe gain, dBi.
    pub gain_dbi: Option<f64>,
    /// Interferer side-lobe gain, dBi.
    pub sidelobe_dbi: Option<f64>,
    /// Receiver main-lobe width, degrees.
    pub rx_beamwidth_deg: Option<f64>,
    /// Receiver main-lobe gain, dBi.
    pub rx_gain_dbi: Option<f64>,
    /// Receiver side-lobe gain, dBi.
    pub rx_sidelobe_dbi: Option<f64>,
    /// Path-loss model name.
    pub model: Option<String>,
    /// Path-loss exponent.
    pub exponent: Option<f64>,
    /// Loss at 1 m (power-law), dB.
    pub loss_at_1m_db: Option<f64>,
    /// Carrier frequency, GHz.
    pub frequency_ghz: Option<f64>,
    /// Gaseous absorption, dB/km.
    pub absorption_db_per_km: Option<f64>,
    /// Minimum distance, m.
    pub min_distance_m: Option<f64>,
    /// Fading law name.
    pub fading: Option<String>,
    /// Rician K, dB (used with `rician`).
    pub k_db: f64,
    /// Nakagami m (used with `nakagami`).
    pub m: f64,
    /// Whether a density sweep will set the density (so none is needed here).
    pub density_swept: bool,
    /// Interferer pattern name (`sector`, `parabolic`, `omni`).
    pub pattern: Option<String>,
    /// β of the line-of-sight probability e^{−βr}, per m (turns blockage on).
    pub los_beta_per_m: Option<f64>,
    /// Exponent of blocked links (close-in law).
    pub nlos_exponent: Option<f64>,
    /// No blockage even with a scenario that has footprints.
    pub no_blockage: bool,
}

impl FieldSpec {
    /// Merges the user's values over the scenario's (when given) and the defaults: radius
    /// 1000 m, guard 10 m, 20 dBm, omni 0 dBi at both ends, close-in n = 3 at 28 GHz,
    /// Rayleigh.
    pub fn resolve(
        sc: Option<&crate::model::scenario::Scenario>,
        a: &FieldOverrides,
    ) -> Result<FieldSpec, crate::Error> {
        use crate::model::antenna::Pattern;
        use crate::model::fading::FadingKind;
        // The interferers take the scenario's [antenna] defaults, as drawn nodes do.
        let lobes = |p: &Pattern| (Some(p.beamwidth_deg()), Some(p.max_gain_dbi()), Some(p.floor_dbi()));
        let defaults = sc.and_then(|s| s.default_antenna.as_ref());
        let ((sc_bw, sc_g, sc_s), sc_p, sc_kind) = match defaults {
            Some(d) => (lobes(&d.0), Some(d.1), Some(d.0.kind())),
            None => ((None, None, None), None, None),
        };
        let (rx_bw, rx_g, rx_s) = match sc {
            Some(s) => lobes(&s.receiver.pattern()),
            None => (None, None, None),
        };
        let pl = sc.map(|s| &s.pathloss);
        let (model, exponent, l1) = match pl.map(|p| p.law()) {
            Some(law) => (law.name(), law.exponent(), law.params().loss_at_1m_db.unwrap_or(0.0)),
            None => ("close-in", 3.0, 40.0),
        };
        let gain = a.gain_dbi.or(sc_g).unwrap_or(0.0);
        let rx_gain = a.rx_gain_dbi.or(rx_g).unwrap_or(0.0);
        let draw = sc.and_then(|s| s.draw.clone());
        let density = match (a.density_per_km2.or(draw.as_ref().map(|d| d.density_per_km2)), a.density_swept) {
            (Some(d), _) => d,
            (None, true) => 1.0,
            _ => {
                return Err(crate::Error::input(crate::Problem::flag(
                    "--density-per-km2",
                    "missing; give the interferer density per km² (or a scenario with a [draw] table)",
                )));
            }
        };
        // The scenario's interferer fading, unless the user says otherwise.
        let (fading, k_db, m) = match (a.fading.as_deref(), sc.map(|s| s.fading.interferer.kind())) {
            (Some(f), _) => (f.to_string(), a.k_db, a.m),
            (None, Some(FadingKind::None)) => ("none".into(), a.k_db, a.m),
            (None, Some(FadingKind::Rayleigh)) | (None, None) => ("rayleigh".into(), a.k_db, a.m),
            (None, Some(FadingKind::Nakagami { m })) => ("nakagami".into(), a.k_db, m),
            (None, Some(FadingKind::Rician { k })) => ("rician".into(), 10.0 * k.log10(), a.m),
        };
        let model_name = a.model.clone().unwrap_or(model.into());
        if model_name == "free-space" && a.exponent.is_some_and(|n| n != 2.0) {
            return Err(crate::Error::input(crate::Problem::flag(
                "--exponent",
                "free-space has exponent 2; use --model close-in or power-law for another exponent",
            )));
        }
        let tx_pattern = match (a.pattern.as_deref(), sc_kind) {
            (Some(p), _) => p.to_string(),
            (None, Some(k)) => k.to_string(),
            (None, None) if a.beamwidth_deg.is_some_and(|b| b < 360.0) => "sector".into(),
            (None, None) => "omni".into(),
        };
        Ok(FieldSpec {
            tx_pattern,
            density_per_km2: density,
            keep: a.keep.or(draw.as_ref().map(|d| d.keep)).unwrap_or(1.0),
            hard_core_m: a.hard_core_m.or(draw.as_ref().map(|d| d.hard_core_m)).unwrap_or(0.0),
            guard_m: a.guard_m,
            radius_m: a.radius_m,
            power_dbm: a.power_dbm.or(sc_p).unwrap_or(20.0),
            tx: (a.beamwidth_deg.or(sc_bw).unwrap_or(360.0), gain, a.sidelobe_dbi.or(sc_s).unwrap_or(gain)),
            rx: (a.rx_beamwidth_deg.or(rx_bw).unwrap_or(360.0), rx_gain, a.rx_sidelobe_dbi.or(rx_s).unwrap_or(rx_gain)),
            fading,
            m,
            k_db,
            model: model_name,
            exponent: a.exponent.unwrap_or(exponent),
            loss_at_1m_db: a.loss_at_1m_db.unwrap_or(l1),
            frequency_ghz: a.frequency_ghz.or(pl.map(|p| p.frequency_ghz())).unwrap_or(28.0),
            absorption_db_per_km: a.absorption_db_per_km.or(pl.map(|p| p.absorption_db_per_km())).unwrap_or(0.0),
            min_distance_m: a.min_distance_m.or(pl.map(|p| p.min_distance_m())).unwrap_or(1.0),
            blockage: if a.no_blockage { None } else { blockage_of(sc, a) },
        })
    }
}
