//! Tiled maps end to end: `map --tile K/N` runs joined by `merge` against one `map` run of
//! the same scenario (every raster, picture, hot spot and layout byte for byte, the summary
//! field for field but the wall-clock time and the file list), the merged VRT read through
//! GDAL (Debian gdal-bin, an independent reader), a real single-node Slurm (Debian
//! slurm-wlm and munge) running the array script in docs/scheduler/, and every bad tile input.

use crate::util::run::{bin, run, stderr};
use std::path::{Path, PathBuf};
use std::process::Command;

/// The demo scenario with absolute paths, in a folder of its own.
fn demo_copy() -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path().join("scenario.toml");
    std::fs::write(&p, crate::util::demo_scenario()).unwrap();
    (dir, p)
}

/// Summary fields that differ between any two runs (time) or by design (the merge also
/// lists its VRTs).
fn comparable_summary(dir: &Path) -> serde_json::Value {
    let mut v: serde_json::Value = serde_json::from_slice(&std::fs::read(dir.join("summary.json")).unwrap()).unwrap();
    let o = v.as_object_mut().unwrap();
    o.remove("elapsed_s");
    o.remove("files");
    v
}

/// Asserts that `merged` holds every file of `single` with the same bytes (summary.json as
/// [`comparable_summary`]) and a VRT per GeoTIFF.
fn assert_same_map(single: &Path, merged: &Path) {
    let mut names: Vec<String> =
        std::fs::read_dir(single).unwrap().map(|e| e.unwrap().file_name().into_string().unwrap()).collect();
    names.sort();
    assert!(names.iter().any(|n| n == "hotspots.geojson"), "{names:?}");
    for n in &names {
        if n == "summary.json" {
            assert_eq!(comparable_summary(single), comparable_summary(merged), "summary.json");
            continue;
        }
        let a = std::fs::read(single.join(n)).unwrap();
        let b = std::fs::read(merged.join(n)).unwrap_or_else(|e| panic!("merged {n}: {e}"));
        assert!(a == b, "{n} differs between the single run and the merged tiles");
        if let Some(stem) = n.strip_suffix(".tif") {
            assert!(merged.join(format!("{stem}.vrt")).is_file(), "no {stem}.vrt");
        }
    }
}

fn map_tiles(sc: &Path, out: &Path, n: usize, extra: &[&str]) {
    for k in 0..n {
        let tile = format!("{k}/{n}");
        let mut args = vec!["map", sc.to_str().unwrap(), "--tile", &tile, "--out", out.to_str().unwrap(), "--quiet"];
        args.extend(extra);
        let o = run(&args);
        assert!(o.status.success(), "tile {tile}: {}", stderr(&o));
    }
}

fn map_single(sc: &Path, out: &Path, extra: &[&str]) {
    let mut args = vec!["map", sc.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"];
    args.extend(extra);
    let o = run(&args);
    assert!(o.status.success(), "{}", stderr(&o));
}

fn merge(dirs: &[&Path], out: &Path) -> std::process::Output {
    let mut c = bin();
    c.arg("merge").args(dirs).arg("--out").arg(out).arg("--quiet");
    c.output().unwrap()
}

/// The demo (surface, four channels, rain: every layer) in 3 and 7 tiles, the 7 merged from
/// two folders, equals one run byte for byte; so does a cutoff run and a drawn ensemble.
#[test]
fn merged_tiles_equal_one_run() {
    let (dir, sc) = demo_copy();
    let d = dir.path();
    map_single(&sc, &d.join("single"), &[]);
    map_tiles(&sc, &d.join("t3"), 3, &[]);
    let o = merge(&[&d.join("t3")], &d.join("m3"));
    assert!(o.status.success(), "{}", stderr(&o));
    assert_same_map(&d.join("single"), &d.join("m3"));
    // Seven tiles computed into two folders (as two batches of a scheduler would).
    for k in 0..7 {
        let (tile, out) = (format!("{k}/7"), d.join(if k < 4 { "a" } else { "b" }));
        let o = run(&["map", sc.to_str().unwrap(), "--tile", &tile, "--out", out.to_str().unwrap(), "--quiet"]);
        assert!(o.status.success(), "{}", stderr(&o));
    }
    let o = merge(&[&d.join("a"), &d.join("b")], &d.join("m7"));
    assert!(o.status.success(), "{}", stderr(&o));
    assert_same_map(&d.join("single"), &d.join("m7"));
    // A cutoff (its bound is the worst tile's) and a drawn ensemble of two layouts.
    map_single(&sc, &d.join("cut"), &["--cutoff-m", "150"]);
    map_tiles(&sc, &d.join("tcut"), 4, &["--cutoff-m", "150"]);
    assert!(merge(&[&d.join("tcut")], &d.join("mcut")).status.success());
    assert_same_map(&d.join("cut"), &d.join("mcut"));
    let drawn = d.join("drawn.toml");
    let text = std::fs::read_to_string(&sc).unwrap().replace("cell_m = 4", "cell_m = 12");
    std::fs::write(
        &drawn,
        format!(
            "{text}\n[draw]\ndensity_per_km2 = 150\nkeep = 0.8\nhard_core_m = 10\nazimuth = \"nearest\"\nseed = 4\n"
        ),
    )
    .unwrap();
    map_single(&drawn, &d.join("ens"), &["--realizations", "2"]);
    map_tiles(&drawn, &d.join("tens"), 2, &["--realizations", "2"]);
    assert!(merge(&[&d.join("tens")], &d.join("mens")).status.success());
    assert_same_map(&d.join("ens"), &d.join("mens"));
}

fn have_gdal() -> bool {
    Command::new("gdalinfo").arg("--version").output().is_ok_and(|o| o.status.success())
}

/// GDAL reads the merged VRT as the single run's raster: same size, geotransform and pixel
/// checksum (gdalinfo -checksum, GDAL 3.6 from Debian gdal-bin).
#[test]
fn gdal_reads_the_merged_vrt_as_the_single_raster() {
    if !have_gdal() {
        eprintln!("!!!!! SKIPPED: gdal-bin (gdalinfo) is not installed; .ci/run installs it !!!!!");
        return;
    }
    let (dir, sc) = demo_copy();
    let d = dir.path();
    map_single(&sc, &d.join("single"), &["--layers", "total,sinr"]);
    map_tiles(&sc, &d.join("t"), 5, &["--layers", "total,sinr"]);
    assert!(merge(&[&d.join("t")], &d.join("m")).status.success());
    let info = |p: PathBuf| {
        let o = Command::new("gdalinfo").arg("-checksum").arg(&p).output().unwrap();
        assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
        let text = String::from_utf8_lossy(&o.stdout).into_owned();
        let keep = |l: &&str| {
            l.starts_with("Size is")
                || l.starts_with("Origin")
                || l.starts_with("Pixel Size")
                || l.contains("Checksum=")
                || l.contains("NoData")
        };
        text.lines().filter(keep).map(str::trim).collect::<Vec<_>>().join("\n")
    };
    for layer in ["total", "sinr"] {
        let a = info(d.join("single").join(format!("{layer}.tif")));
        let b = info(d.join("m").join(format!("{layer}.vrt")));
        assert!(a.contains("Checksum="), "{a}");
        assert_eq!(a, b, "{layer}: the VRT differs from the single run's GeoTIFF");
    }
}

/// Every bad tile input is refused with exit code 2 and a message naming it, and nothing is
/// written.
#[test]
fn bad_tile_inputs_are_refused_by_name() {
    let (dir, sc) = demo_copy();
    let d = dir.path();
    let s = sc.to_str().unwrap();
    let refused = |args: &[&str], envs: &[(&str, &str)], want: &str| {
        let mut c = bin();
        c.args(args).env_remove("SLURM_ARRAY_TASK_ID").env_remove("JOB_COMPLETION_INDEX");
        for (k, v) in envs {
            c.env(k, v);
        }
        let o = c.output().unwrap();
        assert_eq!(o.status.code(), Some(2), "{args:?}: {}", stderr(&o));
        assert!(stderr(&o).contains(want), "{args:?}: want `{want}` in {}", stderr(&o));
    };
    let out = d.join("bad");
    let o = out.to_str().unwrap();
    refused(&["map", s, "--tile", "4/4", "--out", o], &[], "tile index 4 is outside the allowed range [0, 3]");
    refused(&["map", s, "--tile", "0/0", "--out", o], &[], "outside the allowed range [1, 100000]");
    refused(&["map", s, "--tile", "x/4", "--out", o], &[], "no tile index K");
    refused(&["map", s, "--tile", "array/4", "--out", o], &[], "neither SLURM_ARRAY_TASK_ID nor JOB_COMPLETION_INDEX");
    refused(
        &["map", s, "--tile", "array/4", "--out", o],
        &[("SLURM_ARRAY_TASK_ID", "1"), ("JOB_COMPLETION_INDEX", "2")],
        "disagree",
    );
    refused(&["map", s, "--tile", "0/100000", "--out", o], &[], "more than the grid's 225 rows");
    assert!(!out.exists(), "a refused tile wrote {out:?}");
    // Merges: a missing tile, a tile given twice, tiles of two different splits, a changed
    // scenario, an empty folder.
    map_tiles(&sc, &d.join("t"), 3, &["--layers", "total"]);
    let m = d.join("m");
    let ms = m.to_str().unwrap();
    let t0 = d.join("t/tile-0-of-3");
    let t1 = d.join("t/tile-1-of-3");
    refused(&["merge", t0.to_str().unwrap(), t1.to_str().unwrap(), "--out", ms], &[], "tile(s) 2 of 3 are missing");
    refused(&["merge", d.join("t").to_str().unwrap(), t0.to_str().unwrap(), "--out", ms], &[], "is also in");
    map_tiles(&sc, &d.join("u"), 2, &["--layers", "total"]);
    refused(
        &["merge", d.join("t").to_str().unwrap(), d.join("u").to_str().unwrap(), "--out", ms],
        &[],
        "field `tiles`",
    );
    std::fs::create_dir_all(d.join("empty")).unwrap();
    refused(&["merge", d.join("empty").to_str().unwrap(), "--out", ms], &[], "no tile.json");
    refused(
        &["merge", d.join("t").to_str().unwrap(), "--out", t0.to_str().unwrap()],
        &[],
        "choose a folder of its own",
    );
    let text = std::fs::read_to_string(&sc).unwrap();
    std::fs::write(&sc, text.replace("[thresholds]", "[thresholds]\n# edited after the tiles\n")).unwrap();
    refused(&["merge", d.join("t").to_str().unwrap(), "--out", ms], &[], "changed since the tiles were computed");
    assert!(!m.exists(), "a refused merge wrote {m:?}");
}

/// A single-node Slurm on this machine (slurmctld and slurmd on localhost, munge for
/// authentication), stopped when dropped.
struct Slurm {
    conf: PathBuf,
    _dir: tempfile::TempDir,
    started_munge: Option<u32>,
}

impl Slurm {
    fn cmd(&self, prog: &str) -> Command {
        let mut c = Command::new(prog);
        c.env("SLURM_CONF", &self.conf);
        c
    }

    /// Starts the daemons; the error says which step failed.
    fn start() -> Result<Slurm, String> {
        let have = |p: &str| Command::new("which").arg(p).output().is_ok_and(|o| o.status.success());
        for p in ["slurmctld", "slurmd", "sbatch", "sinfo", "munged", "munge", "unmunge"] {
            if !have(p) {
                return Err(format!("`{p}` is not installed (Debian slurm-wlm and munge; .ci/run installs them)"));
            }
        }
        let uid = Command::new("id").arg("-u").output().map(|o| String::from_utf8_lossy(&o.stdout).trim().to_string());
        if uid.ok().as_deref() != Some("0") {
            return Err("the daemons need root here (SlurmUser=root)".into());
        }
        let munge_ok =
            || Command::new("sh").args(["-c", "munge -n | unmunge"]).output().is_ok_and(|o| o.status.success());
        let mut started_munge = None;
        if !munge_ok() {
            for d in ["/run/munge", "/var/log/munge", "/var/lib/munge"] {
                let _ = std::fs::create_dir_all(d);
            }
            if !Path::new("/etc/munge/munge.key").exists() {
                let _ = Command::new("mungekey").arg("--create").output();
            }
            let _ = Command::new("sh")
                .args(["-c", "chown -R munge:munge /etc/munge /run/munge /var/log/munge /var/lib/munge"])
                .output();
            let o = Command::new("munged").arg("--force").output().map_err(|e| format!("munged: {e}"))?;
            if !o.status.success() {
                return Err(format!("munged did not start: {}", String::from_utf8_lossy(&o.stderr)));
            }
            std::thread::sleep(std::time::Duration::from_millis(500));
            if !munge_ok() {
                return Err("munge does not authenticate after munged started".into());
            }
            started_munge = std::fs::read_to_string("/run/munge/munged.pid").ok().and_then(|p| p.trim().parse().ok());
        }
        let dir = tempfile::tempdir().map_err(|e| e.to_string())?;
        let host =
            String::from_utf8_lossy(&Command::new("hostname").arg("-s").output().map_err(|e| e.to_string())?.stdout)
                .trim()
                .to_string();
        let port = 20000 + (std::process::id() % 2000) * 2;
        let p = dir.path().display().to_string();
        for sub in ["state", "spool"] {
            std::fs::create_dir_all(dir.path().join(sub)).map_err(|e| e.to_string())?;
        }
        let cpus = std::thread::available_parallelism().map_or(1, |n| n.get());
        let conf = format!(
            "ClusterName=lobemaptest\nSlurmctldHost={host}\nSlurmUser=root\nSlurmdUser=root\nSlurmctldPort={port}\nSlurmdPort={}\nAuthType=auth/munge\nStateSaveLocation={p}/state\nSlurmdSpoolDir={p}/spool\nSlurmctldPidFile={p}/slurmctld.pid\nSlurmdPidFile={p}/slurmd.pid\nSlurmctldLogFile={p}/slurmctld.log\nSlurmdLogFile={p}/slurmd.log\nProctrackType=proctrack/linuxproc\nTaskPlugin=task/none\nSelectType=select/cons_tres\nSelectTypeParameters=CR_CPU\nReturnToService=2\nMpiDefault=none\nJobAcctGatherType=jobacct_gather/none\nAccountingStorageType=accounting_storage/none\nNodeName={host} CPUs={cpus} State=UNKNOWN\nPartitionName=tiles Nodes=ALL Default=YES MaxTime=INFINITE State=UP\n",
            port + 1
        );
        let conf_path = dir.path().join("slurm.conf");
        std::fs::write(&conf_path, conf).map_err(|e| e.to_string())?;
        let s = Slurm { conf: conf_path, _dir: dir, started_munge };
        for d in ["slurmctld", "slurmd"] {
            let o = s.cmd(d).output().map_err(|e| format!("{d}: {e}"))?;
            if !o.status.success() {
                return Err(format!("{d} did not start: {}", String::from_utf8_lossy(&o.stderr)));
            }
        }
        for _ in 0..60 {
            let o = s.cmd("sinfo").args(["-h", "-o", "%T"]).output().map_err(|e| e.to_string())?;
            if String::from_utf8_lossy(&o.stdout).trim() == "idle" {
                return Ok(s);
            }
            std::thread::sleep(std::time::Duration::from_millis(500));
        }
        let log = std::fs::read_to_string(format!("{p}/slurmd.log")).unwrap_or_default();
        Err(format!(
            "the node did not become idle within 30 s; slurmd.log ends: {}",
            log.lines().rev().take(5).collect::<Vec<_>>().join(" | ")
        ))
    }
}

impl Drop for Slurm {
    fn drop(&mut self) {
        let _ = self.cmd("scontrol").arg("shutdown").output();
        std::thread::sleep(std::time::Duration::from_millis(500));
        for f in ["slurmctld.pid", "slurmd.pid"] {
            if let Some(pid) =
                std::fs::read_to_string(self._dir.path().join(f)).ok().and_then(|p| p.trim().parse::<i32>().ok())
            {
                let _ = Command::new("kill").arg(pid.to_string()).output();
            }
        }
        if let Some(pid) = self.started_munge {
            let _ = Command::new("kill").arg(pid.to_string()).output();
        }
    }
}

/// The docs/scheduler/tiles.sbatch array script on a real single-node Slurm: a 4-task array
/// submitted with `sbatch --wait`, then merged and compared with one run. Where the daemons
/// cannot start, says so loudly and runs the same four tasks as separate processes with
/// SLURM_ARRAY_TASK_ID and SLURM_ARRAY_TASK_COUNT set, as Slurm would.
#[test]
fn a_slurm_job_array_of_tiles_merges_into_the_single_run() {
    let (dir, sc) = demo_copy();
    let d = dir.path();
    let layers = ["--layers", "total,interference,sinr,server,coverage"];
    map_single(&sc, &d.join("single"), &layers);
    let tiles = d.join("tiles");
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/scheduler/tiles.sbatch");
    let exe = std::env::var("LOBEMAP_TEST_BIN").unwrap_or_else(|_| env!("CARGO_BIN_EXE_lobemap").to_string());
    // The script takes the layers from the scenario's defaults; pass ours through LOBEMAP.
    let wrapper = d.join("lobemap-layers.sh");
    std::fs::write(&wrapper, format!("#!/bin/sh\nexec {exe} \"$@\" {}\n", layers.join(" "))).unwrap();
    Command::new("chmod").arg("+x").arg(&wrapper).status().unwrap();
    let envs = [
        ("SCENARIO", sc.display().to_string()),
        ("OUT", tiles.display().to_string()),
        ("LOBEMAP", wrapper.display().to_string()),
    ];
    match Slurm::start() {
        Ok(slurm) => {
            eprintln!("slurm: single-node cluster up ({}); submitting a 4-task array", slurm.conf.display());
            let o = slurm
                .cmd("sbatch")
                .args(["--wait", "--array=0-3", "--cpus-per-task=1", "--mem=0"])
                .arg(format!("--output={}/slurm-%a.log", d.display()))
                .envs(envs.iter().map(|(k, v)| (*k, v.as_str())))
                .arg(&script)
                .output()
                .unwrap();
            let logs: String =
                (0..4).map(|k| std::fs::read_to_string(d.join(format!("slurm-{k}.log"))).unwrap_or_default()).collect();
            assert!(o.status.success(), "sbatch: {} {} logs: {logs}", String::from_utf8_lossy(&o.stdout), stderr(&o));
            eprintln!("slurm: array job {} finished", String::from_utf8_lossy(&o.stdout).trim());
        }
        Err(why) => {
            eprintln!(
                "!!!!! SLURM COULD NOT START: {why}. Running the 4 array tasks as separate processes with SLURM_ARRAY_TASK_ID set instead !!!!!"
            );
            for k in 0..4 {
                let o = Command::new("bash")
                    .arg(&script)
                    .envs(envs.iter().map(|(k, v)| (*k, v.as_str())))
                    .env("SLURM_ARRAY_TASK_ID", k.to_string())
                    .env("SLURM_ARRAY_TASK_COUNT", "4")
                    .env_remove("JOB_COMPLETION_INDEX")
                    .output()
                    .unwrap();
                assert!(o.status.success(), "task {k}: {}", stderr(&o));
            }
        }
    }
    for k in 0..4 {
        assert!(tiles.join(format!("tile-{k}-of-4/tile.json")).is_file(), "tile {k} missing");
    }
    let o = merge(&[&tiles], &d.join("merged"));
    assert!(o.status.success(), "{}", stderr(&o));
    assert_same_map(&d.join("single"), &d.join("merged"));
}
