//! The channel-plan search: a channel and a polarisation for every link (both ends) and every
//! node without a link, from every `[channels]` channel and both polarisations, to maximise
//! the worst link margin, then minimise the failing links, then the summed outage (rain
//! outage minutes with `[rain]`, else the summed SINR shortfall in dB). Nodes with
//! `locked = true` keep theirs, with every node linked to them.
//!
//! The link budget is the link table's (`jobs::links`, mean powers with the mean shadowing)
//! precomputed per channel: the wanted power of each link and every interferer's power at
//! each link's receiver. A change of one group's class updates each link's interference by
//! that group's terms only (incremental). Up to `EXHAUSTIVE_MAX` plans the search enumerates
//! every plan; beyond, seeded local search (best class per group in a shuffled order until a
//! pass changes nothing) from the node file's plan and from random plans. Deterministic for a
//! seed.

use crate::model::link::{Budget, Endpoint, Geometry, gain_toward};
use crate::model::node::{Polarisation, peer_pairs};
use crate::model::obstruction::Edges;
use crate::model::scenario::Scenario;
use crate::model::units::{dbm_to_mw, lin_to_db};
use rand::{RngExt, SeedableRng};
use rayon::prelude::*;

/// Plans up to this many are enumerated whole.
pub const EXHAUSTIVE_MAX: f64 = 2.0e6;

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

/// The precomputed problem.
struct Problem<'a> {
    sc: &'a Scenario,
    /// (from, to) node indices per link.
    links: Vec<(usize, usize)>,
    /// The candidate classes (the first `candidates`), then the node file's others.
    classes: Vec<(usize, Polarisation)>,
    candidates: usize,
    /// Per link and channel: wanted power, mW (shadow mean included).
    s: Vec<Vec<f64>>,
    /// Per link, node and channel: activity-weighted power at the link's receiver, mW.
    p: Vec<Vec<Vec<f64>>>,
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
    thr_db: f64,
}

/// The objective: larger is better, compared in order.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Score {
    worst: f64,
    failing: usize,
    outage: f64,
}

impl Score {
    fn better(&self, o: &Score) -> bool {
        const EPS: f64 = 1e-9;
        if (self.worst - o.worst).abs() > EPS {
            return self.worst > o.worst;
        }
        if self.failing != o.failing {
            return self.failing < o.failing;
        }
        self.outage < o.outage - EPS
    }
}

impl<'a> Problem<'a> {
    fn new(sc: &'a Scenario, locked: &[bool]) -> Problem<'a> {
        let links = peer_pairs(&sc.nodes);
        let nch = sc.spectrum.channels.len();
        // Candidate channels: the table's (the [radio] carrier only when there is no table).
        let chans: Vec<usize> = if nch > 1 { (1..nch).collect() } else { vec![0] };
        let mut classes: Vec<(usize, Polarisation)> =
            chans.iter().flat_map(|&c| [(c, Polarisation::V), (c, Polarisation::H)]).collect();
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
        let (s, p): (Vec<Vec<f64>>, Vec<Vec<Vec<f64>>>) = links
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
                (s, row)
            })
            .unzip();
        let noise = sc
            .spectrum
            .channels
            .iter()
            .map(|c| dbm_to_mw(crate::model::noise::noise_dbm(c.bandwidth_mhz, sc.radio.noise_figure_db)))
            .collect();
        // Groups: the connected parts of the peer graph.
        let n = sc.nodes.len();
        let mut parent: Vec<usize> = (0..n).collect();
        fn root(p: &mut [usize], mut x: usize) -> usize {
            while p[x] != x {
                p[x] = p[p[x]];
                x = p[x];
            }
            x
        }
        for &(a, b) in &links {
            let (ra, rb) = (root(&mut parent, a), root(&mut parent, b));
            if ra != rb {
                parent[ra.max(rb)] = ra.min(rb);
            }
        }
        let mut groups: Vec<Vec<usize>> = Vec::new();
        let mut index = vec![usize::MAX; n];
        let group_of: Vec<usize> = (0..n)
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
        let free = (0..groups.len()).filter(|&g| !groups[g].iter().any(|&i| locked[i])).collect();
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
            candidates,
            s,
            p,
            noise,
            groups,
            group_of,
            free,
            coupling,
            rain,
            thr_db: sc.thresholds.sinr_db,
        }
    }

    /// Each link's interference under `cls` (class index per group), from scratch.
    fn interference(&self, cls: &[usize]) -> Vec<f64> {
        self.links
            .iter()
            .enumerate()
            .map(|(l, &(_, t))| {
                let kv = cls[self.group_of[t]];
                let ch = |i: usize| self.classes[cls[self.group_of[i]]].0;
                (0..self.sc.nodes.len()).map(|i| self.p[l][i][ch(i)] * self.coupling[cls[self.group_of[i]]][kv]).sum()
            })
            .collect()
    }

    fn margins(&self, cls: &[usize], intf: &[f64]) -> Vec<f64> {
        self.links
            .iter()
            .enumerate()
            .map(|(l, &(_, t))| {
                let (c, _) = self.classes[cls[self.group_of[t]]];
                lin_to_db(self.s[l][c] / (intf[l] + self.noise[c])) - self.thr_db
            })
            .collect()
    }

    fn score(&self, cls: &[usize], intf: &[f64]) -> Score {
        let m = self.margins(cls, intf);
        let worst = m.iter().copied().fold(f64::INFINITY, f64::min);
        let failing = m.iter().filter(|x| **x < 0.0).count();
        let outage = match &self.rain {
            Some(r) => m
                .iter()
                .enumerate()
                .map(|(l, &mg)| {
                    let t = self.links[l].1;
                    r[l][cls[self.group_of[t]]].availability(mg).outage_min_per_year
                })
                .sum(),
            None => m.iter().map(|x| (-x).max(0.0)).sum(),
        };
        Score { worst: if worst.is_finite() { worst } else { 0.0 }, failing, outage }
    }

    /// Moves group `g` to class `k`, updating `intf` by the group's terms (and recomputing
    /// the links the group receives on).
    fn apply(&self, cls: &mut [usize], intf: &mut [f64], g: usize, k: usize) {
        let old = cls[g];
        if old == k {
            return;
        }
        let (co, cn) = (self.classes[old].0, self.classes[k].0);
        for (l, &(_, t)) in self.links.iter().enumerate() {
            if self.group_of[t] == g {
                continue;
            }
            let kv = cls[self.group_of[t]];
            for &i in &self.groups[g] {
                intf[l] += self.p[l][i][cn] * self.coupling[k][kv] - self.p[l][i][co] * self.coupling[old][kv];
            }
        }
        cls[g] = k;
        for (l, &(_, t)) in self.links.iter().enumerate() {
            if self.group_of[t] == g {
                let kv = cls[g];
                intf[l] = (0..self.sc.nodes.len())
                    .map(|i| {
                        let ki = cls[self.group_of[i]];
                        self.p[l][i][self.classes[ki].0] * self.coupling[ki][kv]
                    })
                    .sum();
            }
        }
    }

    fn figures(&self, cls: &[usize]) -> Vec<LinkFigure> {
        let intf = self.interference(cls);
        let m = self.margins(cls, &intf);
        self.links
            .iter()
            .zip(m)
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
    search_with(sc, locked, seed, EXHAUSTIVE_MAX)
}

/// [`search`] enumerating every plan only up to `exhaustive_max` plans (0: always the local
/// search; for checking it against the enumeration).
pub fn search_with(sc: &Scenario, locked: &[bool], seed: u64, exhaustive_max: f64) -> Plan {
    let pr = Problem::new(sc, locked);
    // The node file's plan: each group's class.
    let start: Vec<usize> = (0..pr.groups.len())
        .map(|g| {
            let n = &sc.nodes[pr.groups[g][0]];
            pr.classes.iter().position(|c| *c == (n.channel, n.polarisation)).unwrap_or(0)
        })
        .collect();
    let candidates: Vec<usize> = (0..pr.candidates).collect();
    let before = pr.figures(&start);
    let intf0 = pr.interference(&start);
    let score0 = pr.score(&start, &intf0);
    let mut best = (start.clone(), score0);
    let mut evaluated = 1u64;
    let plans = (candidates.len() as f64).powi(pr.free.len() as i32);
    let exhaustive = plans <= exhaustive_max;
    let bar = if exhaustive {
        crate::progress::bar("plan search", plans as u64, "plans")
    } else {
        crate::progress::bar("plan search", 4, "starts")
    };
    if exhaustive {
        // Odometer over the free groups, one group's move at a time (incremental).
        let mut cls = start.clone();
        let mut intf = intf0.clone();
        for &g in &pr.free {
            pr.apply(&mut cls, &mut intf, g, candidates[0]);
        }
        let mut digit = vec![0usize; pr.free.len()];
        loop {
            let s = pr.score(&cls, &intf);
            evaluated += 1;
            if evaluated.is_multiple_of(4096) {
                bar.inc(4096);
            }
            if s.better(&best.1) {
                best = (cls.clone(), s);
            }
            let mut k = 0;
            loop {
                if k == digit.len() {
                    break;
                }
                digit[k] += 1;
                if digit[k] < candidates.len() {
                    pr.apply(&mut cls, &mut intf, pr.free[k], candidates[digit[k]]);
                    break;
                }
                digit[k] = 0;
                pr.apply(&mut cls, &mut intf, pr.free[k], candidates[0]);
                k += 1;
            }
            if k == digit.len() {
                break;
            }
        }
    } else {
        let mut rng = rand_pcg::Pcg64::seed_from_u64(seed);
        for restart in 0..4 {
            let mut cls = start.clone();
            let mut intf = intf0.clone();
            if restart > 0 {
                for &g in &pr.free {
                    let k = candidates[rng.random_range(0..candidates.len())];
                    pr.apply(&mut cls, &mut intf, g, k);
                }
            }
            let mut cur = pr.score(&cls, &intf);
            for _ in 0..50 {
                let mut order = pr.free.clone();
                for i in (1..order.len()).rev() {
                    order.swap(i, rng.random_range(0..=i));
                }
                let mut changed = false;
                for &g in &order {
                    let keep = cls[g];
                    let mut pick = (keep, cur);
                    for &k in &candidates {
                        if k == keep {
                            continue;
                        }
                        pr.apply(&mut cls, &mut intf, g, k);
                        let s = pr.score(&cls, &intf);
                        evaluated += 1;
                        if s.better(&pick.1) {
                            pick = (k, s);
                        }
                    }
                    pr.apply(&mut cls, &mut intf, g, pick.0);
                    if pick.0 != keep {
                        changed = true;
                        cur = pick.1;
                    }
                }
                // Drift of the incremental sums: start each pass from exact sums.
                intf = pr.interference(&cls);
                cur = pr.score(&cls, &intf);
                if !changed {
                    break;
                }
            }
            if cur.better(&best.1) {
                best = (cls, cur);
            }
            bar.inc(1);
        }
    }
    bar.finish_and_clear();
    let (cls, _) = best;
    let exact_after = pr.score(&cls, &pr.interference(&cls));
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
