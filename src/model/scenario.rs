//! A validated scenario: every value in range, the nodes resolved, the grid and the local frame
//! placed. Built by the configuration layer ([`crate::config`]) or in code with
//! [`Scenario::from_parts`].

use crate::geometry::frame::LocalFrame;
use crate::geometry::grid::Grid;
use crate::model::antenna::{AntennaPattern, Pattern, Sector};
use crate::model::draw::DrawSpec;
use crate::model::fading::FadingSpec;
use crate::model::link::Endpoint;
use crate::model::node::Node;
use crate::model::obstruction::{Edges, Obstruction};
use crate::model::pathloss::PathLoss;
use crate::model::surface::Surface;
use std::path::PathBuf;

/// `[radio]`: the receiver's noise bandwidth and figure (the carrier frequency is the path-loss
/// model's, [`PathLoss::frequency_ghz`], so there is one).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Radio {
    /// Receiver noise bandwidth, MHz.
    pub bandwidth_mhz: f64,
    /// Receiver noise figure, dB.
    pub noise_figure_db: f64,
}

/// The antenna of the hypothetical receiver at each cell.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ReceiverAntenna {
    /// The same gain in every direction.
    Omni {
        /// Gain, dBi.
        gain_dbi: f64,
    },
    /// A sector pointed at the cell's best server.
    Aimed(Sector),
}

/// `[receiver]`: the hypothetical receiver at each cell.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Receiver {
    /// Height above ground, m (default 1.5).
    pub height_m: f64,
    /// The receiving antenna.
    pub antenna: ReceiverAntenna,
}

impl Receiver {
    /// Gain used for the `total` layer (what any new receiver would pick up): the omni gain,
    /// or 0 dBi when the receiver is aimed.
    pub fn omni_gain_dbi(&self) -> f64 {
        match self.antenna {
            ReceiverAntenna::Omni { gain_dbi } => gain_dbi,
            ReceiverAntenna::Aimed(_) => 0.0,
        }
    }
    /// Largest gain (toward the server), dBi.
    pub fn max_gain_dbi(&self) -> f64 {
        match self.antenna {
            ReceiverAntenna::Omni { gain_dbi } => gain_dbi,
            ReceiverAntenna::Aimed(s) => s.max_gain_dbi(),
        }
    }
    /// Whether the antenna is aimed at the server.
    pub fn is_aimed(&self) -> bool {
        matches!(self.antenna, ReceiverAntenna::Aimed(_))
    }
    /// The receiving pattern (a sector when aimed).
    pub fn pattern(&self) -> Pattern {
        match self.antenna {
            ReceiverAntenna::Omni { gain_dbi } => Pattern::omni(gain_dbi),
            ReceiverAntenna::Aimed(s) => Pattern::Sector(s),
        }
    }
}

/// `[thresholds]`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Thresholds {
    /// SINR a receiver needs, dB (default 5).
    pub sinr_db: f64,
    /// Interference-over-noise level that marks a hot spot, dB (default 0).
    pub hotspot_i_over_n_db: f64,
    /// Coverage probability a cell or link must reach (default 0.9).
    pub coverage_target: f64,
}

/// `[links]`: capacity estimate settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LinkSettings {
    /// Implementation gap Γ in C = B log2(1 + SINR/Γ), dB (default 3).
    pub capacity_gap_db: f64,
    /// Cap on the spectral efficiency, bit/s/Hz (default 8: 256-QAM at rate about 1).
    pub max_spectral_efficiency: f64,
}

/// `[install]`: installer-sheet settings.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct InstallSettings {
    /// Date at which magnetic declination is evaluated (year, ordinal day).
    pub declination_date: (i32, u16),
}

/// A validated scenario with its nodes loaded. Its fields are read through the accessors;
/// it is built by [`crate::config`] from files or by [`Scenario::from_parts`] and the `with_`
/// builders, so a scenario is always consistent.
#[derive(Debug, Clone)]
pub struct Scenario {
    /// Scenario name (used for the default output folder).
    pub(crate) name: String,
    /// The scenario file.
    pub(crate) path: PathBuf,
    /// The node file.
    pub(crate) nodes_path: PathBuf,
    /// Nodes, in file order.
    pub(crate) nodes: Vec<Node>,
    /// Radio parameters.
    pub(crate) radio: Radio,
    /// Path-loss model.
    pub(crate) pathloss: PathLoss,
    /// Receiver model.
    pub(crate) receiver: Receiver,
    /// Map grid.
    pub(crate) grid: Grid,
    /// Local tangent plane at the grid centre.
    pub(crate) frame: LocalFrame,
    /// Decision thresholds.
    pub(crate) thresholds: Thresholds,
    /// Random layout drawn around (or instead of) the fixed nodes.
    pub(crate) draw: Option<DrawSpec>,
    /// The `[antenna]` defaults resolved (pattern, power, height, activity), when complete:
    /// the antenna drawn nodes and random-field interferers take.
    pub(crate) default_antenna: Option<(Pattern, f64, f64, f64)>,
    /// Fading and shadowing.
    pub(crate) fading: FadingSpec,
    /// Link-table settings.
    pub(crate) links: LinkSettings,
    /// Installer-sheet settings.
    pub(crate) install: InstallSettings,
    /// Gaseous loss source, rain climate and availability target.
    pub(crate) weather: crate::model::weather::Weather,
    /// Channels and rejection figures.
    pub(crate) spectrum: crate::model::channel::Spectrum,
    /// The path loss on each channel (index as `spectrum.channels`; 0 is `pathloss`).
    pub(crate) channel_pathloss: Vec<PathLoss>,
    /// Ground and buildings (`[surface]`), if given: every path is checked against it.
    pub(crate) surface: Option<std::sync::Arc<Surface>>,
    /// Colour limits per picture layer (`[colour_scale]` over the fixed defaults).
    pub(crate) colour_scale: ColourScale,
    /// Lines drawn beneath the sheets (`[context] layers`).
    pub(crate) context: crate::config::context::Context,
}

/// Fixed colour limits of the picture layers, the same in every run so maps compare:
/// the defaults of [`ColourScale::DEFAULT`] unless `[colour_scale]` sets a layer's.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ColourScale {
    /// `total`, dBm.
    pub total: (f32, f32),
    /// `interference`, dBm.
    pub interference: (f32, f32),
    /// `sinr`, dB.
    pub sinr: (f32, f32),
    /// `visible`, nodes.
    pub visible: (f32, f32),
}

impl ColourScale {
    /// Defaults wide enough for millimetre-wave backhaul and narrow-band gateways alike
    /// (noise floors from about −75 dBm at 2 GHz bandwidth to −120 dBm at 200 kHz).
    pub const DEFAULT: ColourScale = ColourScale {
        total: (-120.0, -30.0),
        interference: (-130.0, -50.0),
        sinr: (-10.0, 40.0),
        visible: (0.0, 10.0),
    };

    /// The limits of layer `name`, if it is one of the four.
    pub fn of(&self, name: &str) -> Option<(f32, f32)> {
        match name {
            "total" => Some(self.total),
            "interference" => Some(self.interference),
            "sinr" => Some(self.sinr),
            "visible" => Some(self.visible),
            _ => None,
        }
    }
}

impl Scenario {
    /// Scenario name (used for the default output folder).
    pub fn name(&self) -> &str {
        &self.name
    }
    /// Colour limits of the picture layers.
    pub fn colour_scale(&self) -> &ColourScale {
        &self.colour_scale
    }
    /// The scenario file.
    pub fn path(&self) -> &std::path::Path {
        &self.path
    }
    /// The node file.
    pub fn nodes_path(&self) -> &std::path::Path {
        &self.nodes_path
    }
    /// Nodes, in file order.
    pub fn nodes(&self) -> &[Node] {
        &self.nodes
    }
    /// Radio parameters.
    pub fn radio(&self) -> &Radio {
        &self.radio
    }
    /// Path-loss model (and the carrier frequency).
    pub fn pathloss(&self) -> &PathLoss {
        &self.pathloss
    }
    /// Receiver model.
    pub fn receiver(&self) -> &Receiver {
        &self.receiver
    }
    /// Map grid.
    pub fn grid(&self) -> &Grid {
        &self.grid
    }
    /// Local tangent plane at the grid centre.
    pub fn frame(&self) -> &LocalFrame {
        &self.frame
    }
    /// Decision thresholds.
    pub fn thresholds(&self) -> &Thresholds {
        &self.thresholds
    }
    /// Random layout drawn around (or instead of) the fixed nodes.
    pub fn draw(&self) -> Option<&DrawSpec> {
        self.draw.as_ref()
    }
    /// Fading and shadowing.
    pub fn fading(&self) -> &FadingSpec {
        &self.fading
    }
    /// Link-table settings.
    pub fn links(&self) -> &LinkSettings {
        &self.links
    }
    /// Installer-sheet settings.
    pub fn install(&self) -> &InstallSettings {
        &self.install
    }
    /// Every file the scenario was read from (scenario, nodes, draw areas, surface): no
    /// output may overwrite one.
    pub fn input_files(&self) -> Vec<&std::path::Path> {
        let mut v = vec![self.path.as_path(), self.nodes_path.as_path()];
        if let Some(a) = self.draw.as_ref().and_then(|d| d.areas_path.as_deref()) {
            v.push(a);
        }
        if let Some(s) = &self.surface {
            v.extend(s.files.iter().map(|p| p.as_path()));
        }
        v.extend(self.context.files.iter().map(|p| p.as_path()));
        v
    }
    /// Ground and buildings, if the scenario has a `[surface]`.
    pub fn surface(&self) -> Option<&Surface> {
        self.surface.as_deref()
    }
    /// The same scenario with a surface (or none).
    pub fn with_surface(self, surface: Option<Surface>) -> Scenario {
        Scenario { surface: surface.map(std::sync::Arc::new), ..self }
    }
    /// Altitude of a node's antenna, m: its height above the ground under it (above 0 with no
    /// surface).
    pub fn node_alt_m(&self, n: &Node) -> f64 {
        match &self.surface {
            Some(s) => s.antenna_alt_m(n.lon, n.lat, n.height_m),
            None => n.height_m,
        }
    }
    /// Altitude of the map's receiver at a point, m (on the roof inside a footprint when
    /// receivers stand on roofs).
    pub fn receiver_alt_m(&self, lon: f64, lat: f64) -> f64 {
        match &self.surface {
            Some(s) => s.receiver_alt_m(lon, lat, self.receiver.height_m),
            None => self.receiver.height_m,
        }
    }
    /// A node as a path end.
    pub fn node_end(&self, n: &Node) -> Endpoint {
        Endpoint::at(&self.frame, n.lon, n.lat, self.node_alt_m(n))
    }
    /// The map's receiver at a point as a path end.
    pub fn receiver_end(&self, lon: f64, lat: f64) -> Endpoint {
        Endpoint::at(&self.frame, lon, lat, self.receiver_alt_m(lon, lat))
    }
    /// The obstruction of the path between two points (lon, lat, altitude); clear with no
    /// surface.
    pub fn obstruction(&self, a: (f64, f64, f64), b: (f64, f64, f64), edges: Edges) -> Obstruction {
        match &self.surface {
            Some(s) => s.obstruction(&self.frame, a, b, self.pathloss.frequency_ghz(), edges),
            None => Obstruction::CLEAR,
        }
    }
    /// The obstruction between node `n` and the map's receiver at (lon, lat).
    pub fn node_to_point(&self, n: &Node, lon: f64, lat: f64, edges: Edges) -> Obstruction {
        self.obstruction((n.lon, n.lat, self.node_alt_m(n)), (lon, lat, self.receiver_alt_m(lon, lat)), edges)
    }
    /// The obstruction between two nodes.
    pub fn node_to_node(&self, a: &Node, b: &Node, edges: Edges) -> Obstruction {
        self.obstruction((a.lon, a.lat, self.node_alt_m(a)), (b.lon, b.lat, self.node_alt_m(b)), edges)
    }
    /// The same scenario with other weather settings (the path loss keeps its absorption).
    pub fn with_weather(self, weather: crate::model::weather::Weather) -> Scenario {
        Scenario { weather, ..self }
    }
    /// Gaseous loss source, rain climate and availability target.
    pub fn weather(&self) -> &crate::model::weather::Weather {
        &self.weather
    }
    /// Whether any node works on a `[channels]` channel (not the `[radio]` carrier).
    pub fn uses_channels(&self) -> bool {
        self.nodes.iter().any(|n| n.channel != 0)
    }
    /// Channels and rejection figures.
    pub fn spectrum(&self) -> &crate::model::channel::Spectrum {
        &self.spectrum
    }
    /// The path loss of a node's transmissions (its channel's carrier and gaseous loss).
    pub fn pathloss_of(&self, n: &Node) -> &PathLoss {
        &self.channel_pathloss[n.channel]
    }
    /// The coverage model at receiver noise `noise_dbm`: the scenario's fading and SINR
    /// threshold, and the indicator method when every node is always on
    /// ([`crate::model::coverage::CoverageModel::for_layout`]).
    pub fn coverage_model(&self, noise_dbm: f64) -> crate::model::coverage::CoverageModel {
        crate::model::coverage::CoverageModel::new(self.fading, self.thresholds.sinr_db, noise_dbm)
            .for_layout(self.nodes.iter().all(|n| n.activity >= 1.0))
    }
    /// Receiver noise on a node's channel, dBm.
    pub fn noise_dbm_of(&self, n: &Node) -> f64 {
        crate::model::noise::noise_dbm(self.spectrum.channels[n.channel].bandwidth_mhz, self.radio.noise_figure_db)
    }
    /// Coupling of `tx`'s transmissions into a receiver working on `rx`'s channel and
    /// polarisation (linear).
    pub fn coupling(&self, tx: &Node, rx: &Node) -> f64 {
        self.spectrum.coupling(tx.channel, tx.polarisation, rx.channel, rx.polarisation)
    }
    /// The same scenario with other fading and shadowing.
    pub fn with_fading(self, fading: FadingSpec) -> Scenario {
        Scenario { fading, ..self }
    }
    /// The same scenario with another layout (the grid and frame stay).
    pub fn with_nodes(self, nodes: Vec<Node>) -> Scenario {
        Scenario { nodes, ..self }
    }
    /// A scenario built in code (tests, benchmarks, library users): the frame is placed at the
    /// grid centre; no `[draw]`, no fading, default link and installer settings.
    pub fn from_parts(
        nodes: Vec<Node>,
        radio: Radio,
        pathloss: PathLoss,
        receiver: Receiver,
        grid: Grid,
        thresholds: Thresholds,
    ) -> Scenario {
        let (lon, lat) = grid.bbox().centre();
        let spectrum = crate::model::channel::Spectrum::single(pathloss.frequency_ghz(), radio.bandwidth_mhz);
        let channel_pathloss = vec![pathloss.clone()];
        Scenario {
            name: "in-code".into(),
            path: PathBuf::from("(in code)"),
            nodes_path: PathBuf::from("(in code)"),
            nodes,
            radio,
            pathloss,
            receiver,
            grid,
            frame: LocalFrame::new(lat, lon),
            thresholds,
            draw: None,
            default_antenna: None,
            fading: FadingSpec::default(),
            colour_scale: ColourScale::DEFAULT,
            context: Default::default(),
            links: LinkSettings { capacity_gap_db: 3.0, max_spectral_efficiency: 8.0 },
            install: InstallSettings { declination_date: (2026, 1) },
            weather: crate::model::weather::Weather::default(),
            spectrum,
            channel_pathloss,
            surface: None,
        }
    }

    /// Receiver noise power, dBm.
    pub fn noise_dbm(&self) -> f64 {
        crate::model::noise::noise_dbm(self.radio.bandwidth_mhz, self.radio.noise_figure_db)
    }
}
