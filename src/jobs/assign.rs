//! The channel-plan search: a channel and a polarisation for every link (both ends) and every
//! node without a link, from every `[channels]` channel and both polarisations, to maximise
//! the worst link margin, then minimise the failing links, then the summed outage (rain
//! outage minutes with `[rain]`, else the summed SINR shortfall in dB). Nodes with
//! `locked = true` keep theirs, with every node linked to them.
//!
//! The link budget is the link table's (`jobs::links`, mean powers with the mean shadowing)
//! precomputed per channel: the wanted power of each link and every interferer's power at
//! each link's receiver, less each link's weakest interferers that add up to [`PRUNE`] of the
//! noise. A change of one group's class updates only the links its terms reach (each group
//! lists them), and the objective with them: the worst margin in a tournament tree, the
//! failing links counted, the outage summed in whole micro-units (no drift). Up to
//! `EXHAUSTIVE_MAX` plans the search enumerates every plan; beyond, seeded local search (best
//! class per group in a shuffled order until a pass changes nothing; without rain, only the
//! groups that reach the worst or a failing link, the only ones that can improve the plan)
//! from the node file's plan and from random plans. Deterministic for a seed.

use crate::model::link::{Budget, Endpoint, Geometry, gain_toward};
use crate::model::node::{Polarisation, peer_pairs};
use crate::model::obstruction::Edges;
use crate::model::scenario::Scenario;
use crate::model::units::{dbm_to_mw, lin_to_db};
use rand::{RngExt, SeedableRng};
use rayon::prelude::*;

/// Plans up to this many are enumerated whole.
pub const EXHAUSTIVE_MAX: f64 = 2.0e6;

/// Each link leaves out its weakest interferers whose powers, each at its strongest channel
/// and with full coupling, add up to at most this share of the noise: the interference it
/// sees is then at most that much lower than the link table's, so a margin is at most
/// 10 log10(1 + 1e-4) = 0.0004 dB higher (the table rounds to 0.01 dB).
pub const PRUNE: f64 = 1e-4;

/// One link's figures under a plan.
#[derive(Debug, Clone, serde::Serialize)]
pub struct LinkFigure {
    /// Transmitting end.
    pub from: String,
    /// Receiving end.
    pub to: String,
    /// Channel name.
    pub channel: String,
    /// Polarisation.
    pub polarisation: String,
    /// Mean SINR minus the threshold, dB.
    pub margin_db: f64,
}

/// The search's result.
#[derive(Debug, Clone, serde::Serialize)]
pub struct Plan {
    /// Worst link margin with the node file's plan, dB.
    pub worst_margin_db_before: f64,
    /// Worst link margin with the plan found, dB.
    pub worst_margin_db_after: f64,
    /// Links below the SINR threshold before.
    pub failing_before: usize,
    /// Links below it after.
    pub failing_after: usize,
    /// Summed outage before (minutes a year with `[rain]`, else dB of shortfall).
    pub outage_before: f64,
    /// Summed outage after.
    pub outage_after: f64,
    /// What `outage_*` sums.
    pub outage_unit: String,
    /// Whether every plan was enumerated.
    pub exhaustive: bool,
    /// Plans evaluated.
    pub evaluated: u64,
    /// Per link, before.
    pub before: Vec<LinkFigure>,
    /// Per link, after.
    pub after: Vec<LinkFigure>,
    /// Per node (layout order): (channel index, polarisation) of the plan found.
    #[serde(skip)]
    pub classes: Vec<(usize, Polarisation)>,
}

/// What the search may change: per node (layout order), whether it keeps its channel and
/// polarisation (`locked`), and which channels (indices into the scenario's channel list) and
/// polarisations it may be given (`None`: any candidate).
#[derive(Debug, Clone, Default)]
pub struct Limits {
    /// Nodes that keep their class, with every node linked to them.
    pub locked: Vec<bool>,
    /// Channels a node may take.
    pub channels: Vec<Option<Vec<usize>>>,
    /// Polarisations a node may take.
    pub polarisations: Vec<Option<Vec<Polarisation>>>,
}

impl Limits {
    /// Only `locked`: every other node may take any candidate class.
    pub fn locked(locked: &[bool]) -> Limits {
        Limits { locked: locked.to_vec(), channels: vec![None; locked.len()], polarisations: vec![None; locked.len()] }
    }

    fn allows(&self, i: usize, (c, p): (usize, Polarisation)) -> bool {
        self.channels[i].as_ref().is_none_or(|v| v.contains(&c))
            && self.polarisations[i].as_ref().is_none_or(|v| v.contains(&p))
    }
}

/// The connected parts of the peer graph over `n` nodes: each group's nodes, and each node's
/// group.
fn groups_of(n: usize, links: &[(usize, usize)]) -> (Vec<Vec<usize>>, Vec<usize>) {
    let mut parent: Vec<usize> = (0..n).collect();
    fn root(p: &mut [usize], mut x: usize) -> usize {
        while p[x] != x {
            p[x] = p[p[x]];
            x = p[x];
        }
        x
    }
    for &(a, b) in links {
        let (ra, rb) = (root(&mut parent, a), root(&mut parent, b));
        if ra != rb {
            parent[ra.max(rb)] = ra.min(rb);
        }
    }
    let mut groups: Vec<Vec<usize>> = Vec::new();
    let mut index = vec![usize::MAX; n];
    let group_of = (0..n)
        .map(|i| {
            let r = root(&mut parent, i);
            if index[r] == usize::MAX {
                index[r] = groups.len();
                groups.push(Vec::new());
            }
            groups[index[r]].push(i);
            index[r]
        })
        .collect();
    (groups, group_of)
}

/// Per group, the indices of the `candidates` every node of the group allows.
fn allowed_classes(candidates: &[(usize, Polarisation)], groups: &[Vec<usize>], limits: &Limits) -> Vec<Vec<usize>> {
    groups
        .iter()
        .map(|g| (0..candidates.len()).filter(|&k| g.iter().all(|&i| limits.allows(i, candidates[k]))).collect())
        .collect()
}

/// The candidate classes of a plan search on `sc`: every `[channels]` channel (the `[radio]`
/// carrier when there is no table) on both polarisations.
fn candidate_classes(sc: &Scenario) -> Vec<(usize, Polarisation)> {
    let nch = sc.spectrum.channels.len();
    let chans: Vec<usize> = if nch > 1 { (1..nch).collect() } else { vec![0] };
    chans.iter().flat_map(|&c| [(c, Polarisation::V), (c, Polarisation::H)]).collect()
}

/// The groups (nodes joined by peers) that may change but for which no candidate class is
/// allowed by every node: the ids of each such group's nodes.
pub fn unplaceable(sc: &Scenario, limits: &Limits) -> Vec<Vec<String>> {
    let (groups, _) = groups_of(sc.nodes.len(), &peer_pairs(&sc.nodes));
    let cand = allowed_classes(&candidate_classes(sc), &groups, limits);
    groups
        .iter()
        .zip(&cand)
        .filter(|(g, c)| c.is_empty() && !g.iter().any(|&i| limits.locked[i]))
        .map(|(g, _)| g.iter().map(|&i| sc.nodes[i].id.clone()).collect())
        .collect()
}

/// The precomputed problem.
struct Problem<'a> {
    sc: &'a Scenario,
    /// (from, to) node indices per link.
    links: Vec<(usize, usize)>,
    /// The candidate classes, then the node file's others (a group's candidates are in
    /// `cand`).
    classes: Vec<(usize, Polarisation)>,
    /// Per link and channel: wanted power, mW (shadow mean included).
    s: Vec<Vec<f64>>,
    /// Per link: the interferers kept ([`PRUNE`]), node indices.
    near: Vec<Vec<usize>>,
    /// Per link: each kept interferer's activity-weighted power at the link's receiver on
    /// every channel, mW (`near[l][j]` on channel `c` at `p[l][j * nch + c]`).
    p: Vec<Vec<f64>>,
    nch: usize,
    /// Per group: (link, position in `near[link]`) of each of its nodes' terms.
    touches: Vec<Vec<(usize, usize)>>,
    /// Per group: the links it receives on.
    receives: Vec<Vec<usize>>,
    /// Per group: the candidate classes every node of it allows.
    cand: Vec<Vec<usize>>,
    /// Per channel: noise, mW.
    noise: Vec<f64>,
    /// Per group: its nodes; per node its group.
    groups: Vec<Vec<usize>>,
    group_of: Vec<usize>,
    /// Groups that may change.
    free: Vec<usize>,
    /// coupling[a][b] between candidate classes (indices into `classes`), linear.
    coupling: Vec<Vec<f64>>,
    /// Rain: per link and class, the path's P.530 figures.
    rain: Option<Vec<Vec<crate::model::weather::rain::RainPath>>>,
    /// The SINR threshold as a ratio.
    thr_lin: f64,
}

/// A plan and what it gives: per link the interference (mW), the margin (dB) and the
/// outage term of the objective, kept up to date as groups move: the worst margin in a
/// tournament tree (its root), the failing links counted and the outage summed in whole
/// micro-units, so a move costs the links it reaches and the sums never drift.
#[derive(Clone)]
struct State {
    cls: Vec<usize>,
    intf: Vec<f64>,
    /// Per link, the SINR over the threshold as a ratio (the margin is its dB value; kept
    /// linear so that a link that closes needs no logarithm).
    ratio: Vec<f64>,
    /// Outage term per link, millionths of its unit.
    short: Vec<i64>,
    /// Tournament tree of the ratios: leaves from `tree.len() / 2`, +∞ beyond the links.
    tree: Vec<f64>,
    failing: usize,
    outage: i64,
}

/// Millionths of an outage unit (minutes a year, or dB of shortfall).
const OUTAGE_UNIT: f64 = 1e6;

/// The objective: larger is better, compared in order.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Score {
    worst: f64,
    failing: usize,
    outage: f64,
}

impl Score {
    /// Whether `self` beats `o`: a higher worst margin, then fewer failing links, then an
    /// outage lower by more than half its printed step (0.1 minute a year or 0.1 dB), so the
    /// search does not chase outage differences the plan's table cannot show. (The worst
    /// margin is compared strictly: on large layouts a max-min search climbs in many steps
    /// of a hundredth of a dB, which add up to a dB.)
    fn better(&self, o: &Score) -> bool {
        const EPS: f64 = 1e-9;
        const OUTAGE_STEP: f64 = 0.05;
        if (self.worst - o.worst).abs() > EPS {
            return self.worst > o.worst;
        }
        if self.failing != o.failing {
            return self.failing < o.failing;
        }
        self.outage < o.outage - OUTAGE_STEP
    }
}

impl<'a> Problem<'a> {
    fn new(sc: &'a Scenario, limits: &Limits) -> Problem<'a> {
        let links = peer_pairs(&sc.nodes);
        let nch = sc.spectrum.channels.len();
        let mut classes = candidate_classes(sc);
        let candidates = classes.len();
        // The node file's classes outside the candidates (the [radio] carrier when a table
        // exists) follow them, so the starting plan and locked groups keep theirs.
        for n in &sc.nodes {
            if !classes.contains(&(n.channel, n.polarisation)) {
                classes.push((n.channel, n.polarisation));
            }
        }
        let pos: Vec<Endpoint> = sc.nodes.iter().map(|n| sc.node_end(n)).collect();
        let shadow = sc.fading.shadow_mean();
        // Per link (in parallel; each link's figures depend on nothing else): the wanted power
        // and every interferer's power on every channel.
        let noise: Vec<f64> = sc
            .spectrum
            .channels
            .iter()
            .map(|c| dbm_to_mw(crate::model::noise::noise_dbm(c.bandwidth_mhz, sc.radio.noise_figure_db)))
            .collect();
        let noise_least = noise.iter().copied().fold(f64::INFINITY, f64::min);
        #[allow(clippy::type_complexity)]
        let (s, kept): (Vec<Vec<f64>>, Vec<(Vec<usize>, Vec<f64>)>) = links
            .par_iter()
            .map(|&(f, t)| {
                let (a, b) = (&sc.nodes[f], &sc.nodes[t]);
                let (brg, back) = crate::jobs::links::link_azimuths(a, b);
                let g = Geometry::between(&pos[f], &pos[t]).with_bearings(brg, back);
                let obs = sc.node_to_node(a, b, Edges::Three).loss_db;
                let rx_gain = gain_toward(b, back);
                let s: Vec<f64> = (0..nch)
                    .map(|c| {
                        dbm_to_mw(Budget::new(&sc.channel_pathloss[c], a, g).obstructed(obs).received_dbm(rx_gain))
                            * shadow
                    })
                    .collect();
                let row: Vec<Vec<f64>> = sc
                    .nodes
                    .iter()
                    .enumerate()
                    .map(|(i, n)| {
                        if i == f || i == t {
                            return vec![0.0; nch];
                        }
                        let gi = Geometry::between(&pos[i], &pos[t]);
                        let o = sc.node_to_node(n, b, Edges::Three).loss_db;
                        (0..nch)
                            .map(|c| {
                                let bud = Budget::new(&sc.channel_pathloss[c], n, gi).obstructed(o);
                                let g_rx = gain_toward(b, bud.geometry.bearing_from_rx_deg);
                                n.activity * dbm_to_mw(bud.received_dbm(g_rx)) * shadow
                            })
                            .collect()
                    })
                    .collect();
                // The weakest terms whose strongest-channel powers add up to PRUNE of the
                // least noise are left out.
                let strongest: Vec<f64> = row.iter().map(|v| v.iter().copied().fold(0.0, f64::max)).collect();
                let mut order: Vec<usize> = (0..row.len()).filter(|&i| strongest[i] > 0.0).collect();
                order.sort_by(|&a, &b| strongest[a].total_cmp(&strongest[b]).then(a.cmp(&b)));
                let (mut dropped, mut skip) = (0.0, 0);
                for &i in &order {
                    if dropped + strongest[i] > PRUNE * noise_least {
                        break;
                    }
                    dropped += strongest[i];
                    skip += 1;
                }
                let mut kept = order.split_off(skip);
                kept.sort_unstable();
                let p = kept.iter().flat_map(|&i| row[i].iter().copied()).collect();
                (s, (kept, p))
            })
            .unzip();
        let (near, p): (Vec<Vec<usize>>, Vec<Vec<f64>>) = kept.into_iter().unzip();
        let (groups, group_of) = groups_of(sc.nodes.len(), &links);
        let mut touches = vec![Vec::new(); groups.len()];
        for (l, kept) in near.iter().enumerate() {
            for (j, &i) in kept.iter().enumerate() {
                touches[group_of[i]].push((l, j));
            }
        }
        let mut receives = vec![Vec::new(); groups.len()];
        for (l, &(_, t)) in links.iter().enumerate() {
            receives[group_of[t]].push(l);
        }
        // Groups that may change and change something: a group no link hears (after the
        // pruning) and that receives no link leaves every margin as it is on any class.
        let cand = allowed_classes(&classes[..candidates], &groups, limits);
        let free = (0..groups.len())
            .filter(|&g| !groups[g].iter().any(|&i| limits.locked[i]) && !cand[g].is_empty())
            .filter(|&g| !touches[g].is_empty() || !receives[g].is_empty())
            .collect();
        let coupling = classes
            .iter()
            .map(|&(ci, pi)| classes.iter().map(|&(cr, pr)| sc.spectrum.coupling(ci, pi, cr, pr)).collect())
            .collect();
        let rain = sc.weather().rain.map(|rain| {
            links
                .iter()
                .map(|&(f, t)| {
                    let (a, b) = (&sc.nodes[f], &sc.nodes[t]);
                    let g = Geometry::between(&pos[f], &pos[t]);
                    classes
                        .iter()
                        .map(|&(c, pol)| {
                            crate::model::weather::rain_path(
                                &rain,
                                sc.spectrum.channels[c].centre_ghz,
                                g.distance_m,
                                g.east_m.hypot(g.north_m),
                                pol.cos_2tau(),
                                0.5 * (a.lat + b.lat),
                            )
                        })
                        .collect()
                })
                .collect()
        });
        Problem {
            sc,
            links,
            classes,
            s,
            near,
            p,
            nch,
            touches,
            receives,
            cand,
            noise,
            groups,
            group_of,
            free,
            coupling,
            rain,
            thr_lin: crate::model::units::db_to_lin(sc.thresholds.sinr_db),
        }
    }

    /// Link `l`'s interference under `cls` (class index per group), from its kept terms.
    fn interference_of(&self, cls: &[usize], l: usize) -> f64 {
        let kv = cls[self.group_of[self.links[l].1]];
        self.near[l]
            .iter()
            .enumerate()
            .map(|(j, &i)| {
                let ki = cls[self.group_of[i]];
                self.p[l][j * self.nch + self.classes[ki].0] * self.coupling[ki][kv]
            })
            .sum()
    }

    /// The state of plan `cls`, from scratch.
    fn state(&self, cls: Vec<usize>) -> State {
        let n = self.links.len();
        let leaves = n.next_power_of_two();
        let mut st = State {
            intf: vec![0.0; n],
            ratio: vec![f64::INFINITY; n],
            short: vec![0; n],
            tree: vec![f64::INFINITY; 2 * leaves],
            failing: 0,
            outage: 0,
            cls,
        };
        for l in 0..n {
            st.intf[l] = self.interference_of(&st.cls, l);
            self.refresh(&mut st, l);
        }
        st
    }

    /// Recomputes link `l`'s margin and outage from its interference, and the sums and the
    /// worst margin with them.
    fn refresh(&self, st: &mut State, l: usize) {
        let k = st.cls[self.group_of[self.links[l].1]];
        let c = self.classes[k].0;
        let x = self.s[l][c] / (st.intf[l] + self.noise[c]) / self.thr_lin;
        let short = match &self.rain {
            Some(r) => (r[l][k].availability(lin_to_db(x)).outage_min_per_year * OUTAGE_UNIT).round() as i64,
            None if x < 1.0 => (-lin_to_db(x) * OUTAGE_UNIT).round() as i64,
            None => 0,
        };
        st.failing = st.failing + usize::from(x < 1.0) - usize::from(st.ratio[l] < 1.0);
        st.outage += short - st.short[l];
        st.ratio[l] = x;
        st.short[l] = short;
        // Up the tree while the minimum below changes.
        let mut i = st.tree.len() / 2 + l;
        st.tree[i] = x;
        while i > 1 {
            i /= 2;
            let m = st.tree[2 * i].min(st.tree[2 * i + 1]);
            if m == st.tree[i] {
                break;
            }
            st.tree[i] = m;
        }
    }

    /// Whether moving group `g` can raise the worst margin or lower the failing count: only a
    /// move that reaches the worst link or a failing one can. Without rain the outage term
    /// sums the failing links' shortfalls only, so no other move can improve the score at
    /// all; with rain (`outage_too`) every link's outage counts, and every group may.
    fn may_improve(&self, st: &State, g: usize, outage_too: bool) -> bool {
        if outage_too && self.rain.is_some() {
            return true;
        }
        // The worst link: down the tree along the minimum.
        let mut i = 1;
        while i < st.tree.len() / 2 {
            i = if st.tree[2 * i] <= st.tree[2 * i + 1] { 2 * i } else { 2 * i + 1 };
        }
        let worst = i - st.tree.len() / 2;
        let hit = |l: usize| l == worst || st.ratio[l] < 1.0;
        self.receives[g].iter().any(|&l| hit(l)) || self.touches[g].iter().any(|&(l, _)| hit(l))
    }

    fn score(&self, st: &State) -> Score {
        let worst = st.tree.get(1).copied().unwrap_or(f64::INFINITY);
        let outage = st.outage as f64 / OUTAGE_UNIT;
        Score { worst: if worst.is_finite() { lin_to_db(worst) } else { 0.0 }, failing: st.failing, outage }
    }

    /// Moves group `g` to class `k`, updating the interference of the links its terms reach
    /// by those terms, and recomputing the links it receives on.
    fn apply(&self, st: &mut State, g: usize, k: usize) {
        let old = st.cls[g];
        if old == k {
            return;
        }
        let (co, cn) = (self.classes[old].0, self.classes[k].0);
        for &(l, j) in &self.touches[g] {
            let kv = st.cls[self.group_of[self.links[l].1]];
            if self.group_of[self.links[l].1] == g {
                continue;
            }
            let row = &self.p[l][j * self.nch..(j + 1) * self.nch];
            st.intf[l] += row[cn] * self.coupling[k][kv] - row[co] * self.coupling[old][kv];
            self.refresh(st, l);
        }
        st.cls[g] = k;
        for &l in &self.receives[g] {
            st.intf[l] = self.interference_of(&st.cls, l);
            self.refresh(st, l);
        }
    }

    fn figures(&self, cls: &[usize]) -> Vec<LinkFigure> {
        let st = self.state(cls.to_vec());
        self.links
            .iter()
            .zip(st.ratio.into_iter().map(lin_to_db))
            .map(|(&(f, t), margin_db)| {
                let (c, pol) = self.classes[cls[self.group_of[t]]];
                LinkFigure {
                    from: self.sc.nodes[f].id.clone(),
                    to: self.sc.nodes[t].id.clone(),
                    channel: self.sc.spectrum.channels[c].name.clone(),
                    polarisation: pol.name().into(),
                    margin_db: crate::model::units::round_dp(margin_db, 2),
                }
            })
            .collect()
    }
}

/// Searches a plan for `sc` with `seed`; nodes with `locked[i]` keep their class. A node on a
/// class outside the candidates (the `[radio]` carrier when a table exists) starts on it and,
/// when free, is moved to a candidate.
pub fn search(sc: &Scenario, locked: &[bool], seed: u64) -> Plan {
    search_within(sc, &Limits::locked(locked), seed, EXHAUSTIVE_MAX)
}

/// [`search`] enumerating every plan only up to `exhaustive_max` plans (0: always the local
/// search; for checking it against the enumeration).
pub fn search_with(sc: &Scenario, locked: &[bool], seed: u64, exhaustive_max: f64) -> Plan {
    search_within(sc, &Limits::locked(locked), seed, exhaustive_max)
}

/// [`search_with`] under `limits`: each group takes only the classes all its nodes allow (a
/// group with none, see [`unplaceable`], keeps its own).
pub fn search_within(sc: &Scenario, limits: &Limits, seed: u64, exhaustive_max: f64) -> Plan {
    let pr = Problem::new(sc, limits);
    // The node file's plan: each group's class.
    let start: Vec<usize> = (0..pr.groups.len())
        .map(|g| {
            let n = &sc.nodes[pr.groups[g][0]];
            pr.classes.iter().position(|c| *c == (n.channel, n.polarisation)).unwrap_or(0)
        })
        .collect();
    let st0 = pr.state(start);
    let before = pr.figures(&st0.cls);
    let score0 = pr.score(&st0);
    // The node file's plan with every free group on a class it allows (its first candidate
    // where the file's class is not one): where every search starts, and the best so far.
    let mut st0 = st0;
    for &g in &pr.free {
        if !pr.cand[g].contains(&st0.cls[g]) {
            pr.apply(&mut st0, g, pr.cand[g][0]);
        }
    }
    let mut best = (st0.cls.clone(), pr.score(&st0));
    let mut evaluated = 1u64;
    let plans: f64 = pr.free.iter().map(|&g| pr.cand[g].len() as f64).product();
    let exhaustive = plans <= exhaustive_max;
    let bar = if exhaustive {
        crate::progress::bar("plan search", plans as u64, "plans")
    } else {
        crate::progress::bar("plan search", 4, "starts")
    };
    if exhaustive {
        // Odometer over the free groups, one group's move at a time (incremental).
        let mut st = st0.clone();
        for &g in &pr.free {
            pr.apply(&mut st, g, pr.cand[g][0]);
        }
        let mut digit = vec![0usize; pr.free.len()];
        loop {
            let s = pr.score(&st);
            evaluated += 1;
            if evaluated.is_multiple_of(4096) {
                bar.inc(4096);
            }
            if s.better(&best.1) {
                best = (st.cls.clone(), s);
            }
            let mut k = 0;
            loop {
                if k == digit.len() {
                    break;
                }
                let cand = &pr.cand[pr.free[k]];
                digit[k] += 1;
                if digit[k] < cand.len() {
                    pr.apply(&mut st, pr.free[k], cand[digit[k]]);
                    break;
                }
                digit[k] = 0;
                pr.apply(&mut st, pr.free[k], cand[0]);
                k += 1;
            }
            if k == digit.len() {
                break;
            }
        }
    } else {
        let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
        for restart in 0..4 {
            let mut st = st0.clone();
            if restart > 0 {
                for &g in &pr.free {
                    let cand = &pr.cand[g];
                    pr.apply(&mut st, g, cand[rng.random_range(0..cand.len())]);
                }
            }
            let mut cur = pr.score(&st);
            // Passes over the groups that can raise the worst margin or lower the failing
            // count until one changes nothing, then one over every group (with rain, any move
            // may lower the summed outage); done when that one changes nothing either.
            let mut outage_pass = false;
            for _ in 0..50 {
                let mut order = pr.free.clone();
                for i in (1..order.len()).rev() {
                    order.swap(i, rng.random_range(0..=i));
                }
                let mut changed = false;
                for &g in &order {
                    if !pr.may_improve(&st, g, outage_pass) {
                        continue;
                    }
                    let keep = st.cls[g];
                    let mut pick = (keep, cur);
                    for &k in &pr.cand[g] {
                        if k == keep {
                            continue;
                        }
                        pr.apply(&mut st, g, k);
                        let s = pr.score(&st);
                        evaluated += 1;
                        if s.better(&pick.1) {
                            pick = (k, s);
                        }
                    }
                    pr.apply(&mut st, g, pick.0);
                    if pick.0 != keep {
                        changed = true;
                        cur = pick.1;
                    }
                }
                // Drift of the incremental sums: start each pass from exact sums.
                st = pr.state(st.cls);
                cur = pr.score(&st);
                if !changed && (outage_pass || pr.rain.is_none()) {
                    break;
                }
                outage_pass = !changed;
            }
            if cur.better(&best.1) {
                best = (st.cls, cur);
            }
            bar.inc(1);
        }
    }
    bar.finish_and_clear();
    let (cls, _) = best;
    let exact_after = pr.score(&pr.state(cls.clone()));
    let classes = (0..sc.nodes.len()).map(|i| pr.classes[cls[pr.group_of[i]]]).collect();
    Plan {
        worst_margin_db_before: crate::model::units::round_dp(score0.worst, 2),
        worst_margin_db_after: crate::model::units::round_dp(exact_after.worst, 2),
        failing_before: score0.failing,
        failing_after: exact_after.failing,
        outage_before: crate::model::units::round_dp(score0.outage, 1),
        outage_after: crate::model::units::round_dp(exact_after.outage, 1),
        outage_unit: if pr.rain.is_some() { "min/year" } else { "dB below threshold" }.into(),
        exhaustive,
        evaluated,
        before,
        after: pr.figures(&cls),
        classes,
    }
}
