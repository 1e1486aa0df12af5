//! Output staging: a run's files appear all at once or not at all.
//!
//! **A folder a command owns** ([`Staging::folder`], used by `map`, `links` and `aggregate`)
//! is staged whole: the new files are written into a private stage folder beside it
//! (`.<name>.<random>.lobemap-stage`), every entry of the existing folder that this command
//! does not replace or retire is hard-linked into the stage, and the stage is swapped with the
//! folder in one atomic `renameat2(RENAME_EXCHANGE)` (a new folder: one rename that replaces
//! nothing). A reader, a failure or a kill at any moment sees the complete previous folder or
//! the complete new one. Files of the command's own kinds that this run did not write (a
//! rerun with fewer layers) are retired, so the folder holds exactly this run's outputs beside
//! what other commands and the user put there.
//!
//! **Where a swap is impossible** (the folder holds subfolders or special files, is the
//! current directory, a mount point or a link, or its parent is not writable) and for files
//! written into a shared folder ([`Staging::shared`], used by `draw`), each file is written
//! under an exclusive temporary name in the folder and renamed in. A journal written before
//! the first rename makes this all or nothing too: on a failure the previous files are put
//! back; after a kill the next run into the folder completes the journalled renames before
//! anything else, so the folder never stays mixed.
//!
//! Inputs are never overwritten. Temporaries are created exclusively with unpredictable names
//! (the tempfile crate: `O_EXCL`, no link followed), and an output name already taken by
//! anything but a regular file (a link, a device, a FIFO, a folder) is refused.

use crate::error::Error;
use std::fs::File;
use std::io::{BufWriter, Write};
use std::os::unix::fs::MetadataExt;
use std::path::{Path, PathBuf};

/// Ending of a stage folder's name.
const STAGE_SUFFIX: &str = ".lobemap-stage";
/// The journal of a per-file commit in progress.
const JOURNAL: &str = ".lobemap-commit.json";

/// A set of files being written to one folder.
pub struct Staging {
    dir: PathBuf,
    /// The stage folder and its lock, when the folder is swapped whole.
    stage: Option<(PathBuf, File)>,
    /// Whether `dir` existed when the run started.
    dir_existed: bool,
    /// Whether this run created `dir` itself (per-file mode into a new folder).
    created_dir: bool,
    /// Parent folders this run created, outermost first (removed again on failure).
    created: Vec<PathBuf>,
    /// File names of the command's own kinds: those this run does not write are retired.
    owned: Vec<String>,
    /// Files written so far: (where it is, where it goes). Behind a lock so that several
    /// writers may write different files at once (`write` takes `&self`).
    pending: std::sync::Mutex<Vec<(PathBuf, PathBuf)>>,
    protected: Vec<PathBuf>,
    committed: bool,
    /// An exclusive lock on the existing folder for the run's lifetime (released when dropped).
    _lock: Option<File>,
}

/// Temporaries and stage folders of the runs in this process, removed by the signal handler.
struct Registry {
    files: Vec<PathBuf>,
    dirs: Vec<PathBuf>,
}
static PENDING: std::sync::Mutex<Registry> = std::sync::Mutex::new(Registry { files: Vec::new(), dirs: Vec::new() });

/// Held while a commit moves files into place: the signal handler waits for it, so an
/// interrupt never lands between the renames of one commit.
static COMMIT: std::sync::Mutex<()> = std::sync::Mutex::new(());

fn commit_lock() -> std::sync::MutexGuard<'static, ()> {
    COMMIT.lock().unwrap_or_else(|e| e.into_inner())
}

fn registry() -> std::sync::MutexGuard<'static, Registry> {
    PENDING.lock().unwrap_or_else(|e| e.into_inner())
}

/// Removes this process's temporaries and stage folders: called on SIGINT/SIGTERM before
/// exiting. It keeps the registry locked, so no temporary can be created, and no stage
/// swapped, after it ran.
pub fn remove_pending() {
    let c = commit_lock();
    std::mem::forget(c);
    let mut v = registry();
    for p in v.files.drain(..) {
        let _ = std::fs::remove_file(p);
    }
    for d in v.dirs.drain(..) {
        let _ = std::fs::remove_dir_all(d);
    }
    std::mem::forget(v);
}

/// Creates an exclusive temporary `.<name>.<random>.partial` in `dir` and registers it, both
/// under the registry's lock (so an interrupt sees every temporary that exists).
fn create_temp(dir: &Path, name: &str) -> std::io::Result<(File, PathBuf)> {
    let mut v = registry();
    let (file, path) = tempfile::Builder::new()
        .prefix(&format!(".{name}."))
        .suffix(".partial")
        .tempfile_in(dir)?
        .keep()
        .map_err(|e| e.error)?;
    v.files.push(path.clone());
    Ok((file, path))
}

fn unregister(p: &Path) {
    let mut v = registry();
    v.files.retain(|q| q != p);
    v.dirs.retain(|q| q != p);
}

/// Whether a file name is one of lobemap's temporaries (`.<name>.<random>.partial`,
/// `.lobemap-probe-<random>`).
fn is_temporary(name: &str) -> bool {
    name.starts_with('.') && (name.ends_with(".partial") || name.starts_with(".lobemap-probe-"))
}

/// Fault-test hook: with `LOBEMAP_FAULT_PAUSE_MS` set, announces each commit step on stderr
/// and sleeps that long, so a test can kill the run at a known step. Unset, it does nothing.
fn fault_point(step: &str) {
    if let Some(ms) = std::env::var("LOBEMAP_FAULT_PAUSE_MS").ok().and_then(|v| v.parse::<u64>().ok()) {
        eprintln!("lobemap-fault-point {step}");
        std::thread::sleep(std::time::Duration::from_millis(ms));
    }
}

/// The journal of a per-file commit: temporaries to rename into place and retired files to
/// remove. Written (and synced) before the first rename.
#[derive(serde::Serialize, serde::Deserialize)]
struct Journal {
    rename: Vec<(PathBuf, PathBuf)>,
    remove: Vec<PathBuf>,
}

/// Completes a per-file commit that a killed run left journalled in `dir`: every temporary
/// still there is renamed into place and the retired files are removed. Runs under the
/// folder's lock, before stale temporaries are swept.
fn roll_forward(dir: &Path) {
    let path = dir.join(JOURNAL);
    let Ok(text) = std::fs::read_to_string(&path) else { return };
    if let Ok(j) = serde_json::from_str::<Journal>(&text) {
        for (tmp, fin) in &j.rename {
            if std::fs::symlink_metadata(tmp).is_ok_and(|m| m.file_type().is_file()) {
                let _ = std::fs::rename(tmp, fin);
            }
        }
        for f in &j.remove {
            if std::fs::symlink_metadata(f).is_ok_and(|m| m.file_type().is_file()) {
                let _ = std::fs::remove_file(f);
            }
        }
    }
    let _ = std::fs::remove_file(&path);
}

fn sync_dir(dir: &Path) {
    if let Ok(f) = File::open(dir) {
        let _ = f.sync_all();
    }
}

/// The folder that holds `dir` (`.` for a bare relative name).
fn parent_of(dir: &Path) -> PathBuf {
    match dir.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    }
}

/// Removes stage folders of `name` in `parent` that no live run holds (left by a killed run).
fn sweep_stages(parent: &Path, name: &str) {
    let Ok(entries) = std::fs::read_dir(parent) else { return };
    let prefix = format!(".{name}.");
    for e in entries.flatten() {
        let n = e.file_name();
        let Some(n) = n.to_str() else { continue };
        if !(n.starts_with(&prefix) && n.ends_with(STAGE_SUFFIX) && e.file_type().is_ok_and(|t| t.is_dir())) {
            continue;
        }
        // A live run holds its stage's lock.
        if File::open(e.path()).is_ok_and(|f| f.try_lock().is_ok()) {
            let _ = std::fs::remove_dir_all(e.path());
        }
    }
}

/// Whether `dir` can be swapped whole: a real folder (not a link, not the current directory,
/// not a mount point) holding only regular files and links.
fn swappable(dir: &Path, parent: &Path) -> bool {
    let (Ok(m), Ok(pm)) = (std::fs::symlink_metadata(dir), std::fs::metadata(parent)) else { return false };
    if !m.file_type().is_dir() || m.dev() != pm.dev() {
        return false;
    }
    let cwd = std::env::current_dir().and_then(std::fs::canonicalize).ok();
    if cwd.is_some() && std::fs::canonicalize(dir).ok() == cwd {
        return false;
    }
    let Ok(entries) = std::fs::read_dir(dir) else { return false };
    entries.flatten().all(|e| e.file_type().is_ok_and(|t| t.is_file() || t.is_symlink()))
}

/// Why a swap did not happen: `Fallback` leaves the per-file commit to do it.
enum SwapError {
    Fallback,
    Fatal(PathBuf, std::io::Error),
}

impl Staging {
    /// Opens the output folder `dir` of a command that owns it: the folder is staged and
    /// swapped whole where possible, and files named in `owned` (every name the command can
    /// write) that this run does not write are retired. `inputs` are files that must never be
    /// overwritten.
    pub fn folder(dir: &Path, inputs: &[&Path], owned: Vec<String>) -> Result<Staging, Error> {
        Staging::open(dir, inputs, owned, true)
    }

    /// Opens `dir`, a folder shared with other content, to write files renamed in one by one
    /// (all or nothing through the journal). Nothing else in it is touched.
    pub fn shared(dir: &Path, inputs: &[&Path]) -> Result<Staging, Error> {
        Staging::open(dir, inputs, Vec::new(), false)
    }

    fn open(dir: &Path, inputs: &[&Path], owned: Vec<String>, swap: bool) -> Result<Staging, Error> {
        let err = |e| Error::Output { path: dir.to_path_buf(), source: e };
        let parent = parent_of(dir);
        let name = dir.file_name().and_then(|n| n.to_str()).unwrap_or("out").to_string();
        // Parent folders that do not exist yet are created, and removed again on failure.
        let mut created = Vec::new();
        let mut p = parent.clone();
        while !p.as_os_str().is_empty() && std::fs::symlink_metadata(&p).is_err() {
            created.push(p.clone());
            p = parent_of(&p);
        }
        created.reverse();
        let undo_created = |created: &[PathBuf]| {
            for c in created.iter().rev() {
                let _ = std::fs::remove_dir(c);
            }
        };
        if let Err(e) = std::fs::create_dir_all(&parent) {
            undo_created(&created);
            return Err(err(e));
        }
        let mut st = Staging {
            dir: dir.to_path_buf(),
            stage: None,
            dir_existed: std::fs::symlink_metadata(dir).is_ok(),
            created_dir: false,
            created,
            owned,
            pending: std::sync::Mutex::new(Vec::new()),
            protected: inputs.iter().filter_map(|p| std::fs::canonicalize(p).ok()).collect(),
            committed: false,
            _lock: None,
        };
        // One run at a time per folder: a second one is refused, not mixed in.
        if st.dir_existed {
            let lock = File::open(dir).map_err(err)?;
            if let Err(e) = lock.try_lock() {
                let why = match e {
                    std::fs::TryLockError::WouldBlock => std::io::Error::other(
                        "another lobemap run is writing to this folder; wait for it or choose another --out",
                    ),
                    std::fs::TryLockError::Error(e) => e,
                };
                return Err(err(why));
            }
            st._lock = Some(lock);
            // With the lock held no other run is writing here: a journalled commit of a
            // killed run is completed, then temporaries left by killed runs are removed.
            roll_forward(dir);
            if let Ok(entries) = std::fs::read_dir(dir) {
                for e in entries.flatten() {
                    let stale = e.file_name().to_str().is_some_and(is_temporary);
                    if stale && e.file_type().is_ok_and(|t| t.is_file()) {
                        let _ = std::fs::remove_file(e.path());
                    }
                }
            }
        }
        if swap {
            sweep_stages(&parent, &name);
        }
        if swap && (!st.dir_existed || swappable(dir, &parent)) {
            let made = {
                let mut v = registry();
                let made = tempfile::Builder::new()
                    .prefix(&format!(".{name}."))
                    .suffix(STAGE_SUFFIX)
                    .tempdir_in(&parent)
                    .map(|d| d.keep())
                    .and_then(|s| {
                        let lock = File::open(&s)?;
                        lock.try_lock().map_err(|_| std::io::Error::other("stage folder locked"))?;
                        Ok((s, lock))
                    });
                if let Ok((s, _)) = &made {
                    v.dirs.push(s.clone());
                }
                made
            };
            match made {
                Ok(s) => st.stage = Some(s),
                Err(e) if !st.dir_existed => return Err(err(e)),
                Err(_) => {}
            }
        }
        if st.stage.is_none() && !st.dir_existed {
            std::fs::create_dir(dir).map_err(err)?;
            st.created_dir = true;
        }
        // A write probe where the files go: an exclusive temporary, removed when dropped.
        let work = st.work().to_path_buf();
        tempfile::Builder::new()
            .prefix(".lobemap-probe-")
            .tempfile_in(&work)
            .and_then(|mut f| f.write_all(b"x"))
            .map_err(err)?;
        Ok(st)
    }

    /// The output folder.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Where files are written before the commit.
    fn work(&self) -> &Path {
        self.stage.as_ref().map_or(&self.dir, |(s, _)| s)
    }

    /// Writes a whole file from bytes.
    pub fn write(&self, name: &str, bytes: &[u8]) -> Result<(), Error> {
        self.write_with(name, |w| w.write_all(bytes))
    }

    /// Writes a file through a buffered writer given to `f`.
    pub fn write_with(
        &self,
        name: &str,
        f: impl FnOnce(&mut BufWriter<File>) -> std::io::Result<()>,
    ) -> Result<(), Error> {
        let fin = self.dir.join(name);
        if let Ok(c) = std::fs::canonicalize(&fin)
            && self.protected.contains(&c)
        {
            return Err(Error::Output {
                path: fin,
                source: std::io::Error::other("refusing to overwrite an input file; choose another --out folder"),
            });
        }
        if let Ok(m) = std::fs::symlink_metadata(&fin)
            && !m.file_type().is_file()
        {
            return Err(Error::Output {
                path: fin,
                source: std::io::Error::other(
                    "the name is taken by a link, a device, a FIFO or a folder; lobemap writes only regular files",
                ),
            });
        }
        let created = match &self.stage {
            // The stage is this run's own locked folder: files take their final names there,
            // created under the registry's lock so none appears after an interrupt's sweep.
            Some((s, _)) => {
                let _v = registry();
                let p = s.join(name);
                std::fs::OpenOptions::new().write(true).create_new(true).open(&p).map(|f| (f, p))
            }
            None => create_temp(&self.dir, name),
        };
        let res = created.and_then(|(file, path)| {
            let mut w = BufWriter::new(file);
            let written =
                f(&mut w).and_then(|_| w.flush()).and_then(|_| w.into_inner().map_err(|e| e.into_error())?.sync_all());
            match written {
                Ok(()) => Ok(path),
                Err(e) => {
                    let _ = std::fs::remove_file(&path);
                    unregister(&path);
                    Err(e)
                }
            }
        });
        match res {
            Ok(tmp) => {
                self.pending.lock().unwrap_or_else(std::sync::PoisonError::into_inner).push((tmp, fin));
                Ok(())
            }
            Err(e) => Err(Error::Output { path: fin, source: e }),
        }
    }

    /// Puts every staged file in place: the whole folder swapped, or file by file.
    pub fn commit(mut self) -> Result<Vec<PathBuf>, Error> {
        let pending = std::mem::take(self.pending.get_mut().unwrap_or_else(std::sync::PoisonError::into_inner));
        let done: Vec<PathBuf> = pending.iter().map(|(_, f)| f.clone()).collect();
        if self.stage.is_some() {
            match self.swap(&pending) {
                Ok(()) => {
                    self.committed = true;
                    return Ok(done);
                }
                Err(SwapError::Fatal(path, e)) => {
                    *self.pending.get_mut().unwrap_or_else(std::sync::PoisonError::into_inner) = pending;
                    return Err(Error::Output { path, source: e });
                }
                Err(SwapError::Fallback) => {
                    if !self.dir_existed {
                        // A new folder whose swap is not supported: create it, rename in.
                        std::fs::create_dir(&self.dir)
                            .map_err(|e| Error::Output { path: self.dir.clone(), source: e })?;
                        self.created_dir = true;
                    }
                }
            }
        }
        self.per_file(pending)?;
        self.committed = true;
        Ok(done)
    }

    /// Names in the folder this run retires: its command's kinds it did not write this time.
    fn retired(&self, written: &[&str]) -> Vec<PathBuf> {
        self.owned
            .iter()
            .filter(|n| !written.contains(&n.as_str()))
            .map(|n| self.dir.join(n))
            .filter(|p| std::fs::symlink_metadata(p).is_ok_and(|m| m.file_type().is_file()))
            .collect()
    }

    /// Links what the folder keeps into the stage and swaps the stage with the folder.
    fn swap(&mut self, pending: &[(PathBuf, PathBuf)]) -> Result<(), SwapError> {
        let stage = self.stage.as_ref().map(|(s, _)| s.clone()).ok_or(SwapError::Fallback)?;
        let written: Vec<&str> = pending.iter().filter_map(|(_, f)| f.file_name()?.to_str()).collect();
        // Names of the previous folder the new one does not take over: the command's own
        // kinds (written anew or retired), temporaries and a journal.
        let dropped = |n: &std::ffi::OsStr| {
            n.to_str().is_some_and(|s| self.owned.iter().any(|o| o == s) || is_temporary(s) || s == JOURNAL)
        };
        if self.dir_existed {
            let entries = std::fs::read_dir(&self.dir).map_err(|_| SwapError::Fallback)?;
            for e in entries.flatten() {
                let n = e.file_name();
                if dropped(&n) || n.to_str().is_some_and(|s| written.contains(&s)) {
                    continue;
                }
                if !e.file_type().is_ok_and(|t| t.is_file() || t.is_symlink()) {
                    return Err(SwapError::Fallback);
                }
                // std::fs::hard_link links a symbolic link itself on Linux (linkat, no follow).
                std::fs::hard_link(e.path(), stage.join(&n)).map_err(|_| SwapError::Fallback)?;
            }
            if let Ok(m) = std::fs::metadata(&self.dir) {
                let _ = std::fs::set_permissions(&stage, m.permissions());
                let _ = std::os::unix::fs::chown(&stage, Some(m.uid()), Some(m.gid()));
            }
        } else {
            // A new folder gets the mode any new folder gets (the stage was made private).
            let probe = stage.join(".lobemap-probe-mode");
            if std::fs::create_dir(&probe).is_ok() {
                if let Ok(m) = std::fs::metadata(&probe) {
                    let _ = std::fs::set_permissions(&stage, m.permissions());
                }
                let _ = std::fs::remove_dir(&probe);
            }
        }
        sync_dir(&stage);
        fault_point("before-swap");
        {
            // Under the commit lock, so an interrupt either removes the stage before the swap
            // or sees the swap done.
            let _guard = commit_lock();
            let flags =
                if self.dir_existed { rustix::fs::RenameFlags::EXCHANGE } else { rustix::fs::RenameFlags::NOREPLACE };
            let r = rustix::fs::renameat_with(rustix::fs::CWD, &stage, rustix::fs::CWD, &self.dir, flags);
            match r {
                Ok(()) => {}
                Err(e) if e == rustix::io::Errno::EXIST => {
                    return Err(SwapError::Fatal(
                        self.dir.clone(),
                        std::io::Error::other("another run created this folder meanwhile; choose another --out"),
                    ));
                }
                Err(e)
                    if [
                        rustix::io::Errno::INVAL,
                        rustix::io::Errno::NOSYS,
                        rustix::io::Errno::OPNOTSUPP,
                        rustix::io::Errno::XDEV,
                    ]
                    .contains(&e) =>
                {
                    return Err(SwapError::Fallback);
                }
                Err(e) => return Err(SwapError::Fatal(self.dir.clone(), e.into())),
            }
        }
        sync_dir(&parent_of(&self.dir));
        fault_point("after-swap");
        // The stage's path now holds the previous folder. Anything that appeared in it after
        // the links were made (a name the new folder lacks) is moved over before it is removed.
        if self.dir_existed
            && let Ok(entries) = std::fs::read_dir(&stage)
        {
            for e in entries.flatten() {
                let n = e.file_name();
                if !dropped(&n) && std::fs::symlink_metadata(self.dir.join(&n)).is_err() {
                    let _ = std::fs::rename(e.path(), self.dir.join(&n));
                }
            }
        }
        let _ = std::fs::remove_dir_all(&stage);
        unregister(&stage);
        self.stage = None;
        Ok(())
    }

    /// Renames the staged files in one by one, journalled; on a failure the previous files are
    /// put back.
    fn per_file(&mut self, pending: Vec<(PathBuf, PathBuf)>) -> Result<(), Error> {
        let written: Vec<&str> = pending.iter().filter_map(|(_, f)| f.file_name()?.to_str()).collect();
        let retired = self.retired(&written);
        let journal = Journal { rename: pending.clone(), remove: retired.clone() };
        let jpath = self.dir.join(JOURNAL);
        // An interrupt waits until the renames are done or undone.
        let _guard = commit_lock();
        let fail_early = |e: std::io::Error, path: &Path| {
            for (tmp, _) in &pending {
                let _ = std::fs::remove_file(tmp);
                unregister(tmp);
            }
            let _ = std::fs::remove_file(&jpath);
            Error::Output { path: path.to_path_buf(), source: e }
        };
        // The journal is the commit point: once it is on disk the new set will be completed.
        let jbytes = serde_json::to_vec(&journal).map_err(|e| fail_early(e.into(), &jpath))?;
        let jtmp = create_temp(&self.dir, JOURNAL).and_then(|(mut f, p)| {
            f.write_all(&jbytes)?;
            f.sync_all()?;
            Ok(p)
        });
        match jtmp.and_then(|p| std::fs::rename(&p, &jpath).map(|_| p)) {
            Ok(p) => unregister(&p),
            Err(e) => return Err(fail_early(e, &jpath)),
        }
        sync_dir(&self.dir);
        // Previous files of the same names, and retired ones, are moved aside first; on any
        // failure the new ones are removed and the previous ones put back.
        let mut aside: Vec<(PathBuf, PathBuf)> = Vec::new();
        let mut done: Vec<PathBuf> = Vec::new();
        let fail = |e: std::io::Error, path: &Path, aside: &[(PathBuf, PathBuf)], done: &[PathBuf]| {
            for f in done {
                let _ = std::fs::remove_file(f);
            }
            for (old, fin) in aside {
                let _ = std::fs::rename(old, fin);
                unregister(old);
            }
            fail_early(e, path)
        };
        let replaced = pending.iter().map(|(_, f)| f).filter(|f| f.exists()).cloned();
        for fin in replaced.chain(retired.iter().cloned()).collect::<Vec<_>>() {
            let name = fin.file_name().and_then(|n| n.to_str()).unwrap_or("file");
            let old = create_temp(&self.dir, name).map(|(_, p)| p);
            match old.and_then(|old| std::fs::rename(&fin, &old).map(|_| old)) {
                Ok(old) => aside.push((old, fin)),
                Err(e) => return Err(fail(e, &fin, &aside, &done)),
            }
        }
        for (tmp, fin) in &pending {
            fault_point("rename");
            if let Err(e) = std::fs::rename(tmp, fin) {
                return Err(fail(e, fin, &aside, &done));
            }
            unregister(tmp);
            done.push(fin.clone());
        }
        for (old, _) in &aside {
            let _ = std::fs::remove_file(old);
            unregister(old);
        }
        sync_dir(&self.dir);
        let _ = std::fs::remove_file(&jpath);
        if let Some((s, _)) = self.stage.take() {
            let _ = std::fs::remove_dir_all(&s);
            unregister(&s);
        }
        Ok(())
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        if !self.committed {
            for (tmp, _) in self.pending.get_mut().unwrap_or_else(std::sync::PoisonError::into_inner).iter() {
                let _ = std::fs::remove_file(tmp);
                unregister(tmp);
            }
            if let Some((s, _)) = self.stage.take() {
                let _ = std::fs::remove_dir_all(&s);
                unregister(&s);
            }
            if self.created_dir {
                let _ = std::fs::remove_dir(&self.dir);
            }
            for c in self.created.iter().rev() {
                let _ = std::fs::remove_dir(c);
            }
        }
    }
}
