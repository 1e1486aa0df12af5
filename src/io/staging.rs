//! Output staging: every file is written under a temporary name in the output folder and
//! renamed into place only when all of them were written, so a failure leaves no partial
//! output. Inputs are never overwritten. Temporaries are created exclusively with
//! unpredictable names (the tempfile crate: `O_EXCL`, no link followed), and an output name
//! already taken by anything but a regular file (a link, a device, a FIFO, a folder) is
//! refused.

use crate::error::Error;
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

/// A set of files being written to one folder.
pub struct Staging {
    dir: PathBuf,
    created_dir: bool,
    pending: Vec<(PathBuf, PathBuf)>,
    protected: Vec<PathBuf>,
    committed: bool,
    /// An exclusive lock on the folder for the run's lifetime (released when dropped).
    _lock: File,
}

/// Temporaries of the runs in this process, removed by the signal handler.
static PENDING: std::sync::Mutex<Vec<PathBuf>> = std::sync::Mutex::new(Vec::new());

/// Removes this process's temporaries: called on SIGINT/SIGTERM before exiting. It keeps the
/// registry locked, so no temporary can be created after it ran.
pub fn remove_pending() {
    let mut v = PENDING.lock().unwrap_or_else(|e| e.into_inner());
    for p in v.drain(..) {
        let _ = std::fs::remove_file(p);
    }
    std::mem::forget(v);
}

/// Creates an exclusive temporary `.<name>.<random>.partial` in `dir` and registers it, both
/// under the registry's lock (so an interrupt sees every temporary that exists).
fn create_temp(dir: &Path, name: &str) -> std::io::Result<(File, PathBuf)> {
    let mut v = PENDING.lock().unwrap_or_else(|e| e.into_inner());
    let (file, path) = tempfile::Builder::new()
        .prefix(&format!(".{name}."))
        .suffix(".partial")
        .tempfile_in(dir)?
        .keep()
        .map_err(|e| e.error)?;
    v.push(path.clone());
    Ok((file, path))
}

fn unregister(p: &Path) {
    if let Ok(mut v) = PENDING.lock() {
        v.retain(|q| q != p);
    }
}

/// Whether a file name is one of lobemap's temporaries (`.<name>.<random>.partial`,
/// `.lobemap-probe-<random>`).
fn is_temporary(name: &str) -> bool {
    name.starts_with('.') && (name.ends_with(".partial") || name.starts_with(".lobemap-probe-"))
}

impl Staging {
    /// Opens (creating if needed) `dir` and checks that it is writable. `inputs` are files
    /// that must never be overwritten.
    pub fn new(dir: &Path, inputs: &[&Path]) -> Result<Staging, Error> {
        let err = |e| Error::Output { path: dir.to_path_buf(), source: e };
        let created_dir = !dir.exists();
        std::fs::create_dir_all(dir).map_err(err)?;
        // One run at a time per folder: a second one is refused, not mixed in.
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
        // With the lock held no other run is writing here: temporaries left by a killed run
        // are removed.
        if let Ok(entries) = std::fs::read_dir(dir) {
            for e in entries.flatten() {
                let stale = e.file_name().to_str().is_some_and(is_temporary);
                if stale && e.file_type().is_ok_and(|t| t.is_file()) {
                    let _ = std::fs::remove_file(e.path());
                }
            }
        }
        // A write probe: an exclusive temporary, removed when dropped.
        if let Err(e) =
            tempfile::Builder::new().prefix(".lobemap-probe-").tempfile_in(dir).and_then(|mut f| f.write_all(b"x"))
        {
            if created_dir {
                let _ = std::fs::remove_dir(dir);
            }
            return Err(err(e));
        }
        let protected = inputs.iter().filter_map(|p| std::fs::canonicalize(p).ok()).collect();
        Ok(Staging {
            dir: dir.to_path_buf(),
            created_dir,
            pending: Vec::new(),
            protected,
            committed: false,
            _lock: lock,
        })
    }

    /// The output folder.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// Writes a whole file from bytes.
    pub fn write(&mut self, name: &str, bytes: &[u8]) -> Result<(), Error> {
        self.write_with(name, |w| w.write_all(bytes))
    }

    /// Writes a file through a buffered writer given to `f`.
    pub fn write_with(
        &mut self,
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
        let res = create_temp(&self.dir, name).and_then(|(file, path)| {
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
                self.pending.push((tmp, fin));
                Ok(())
            }
            Err(e) => Err(Error::Output { path: fin, source: e }),
        }
    }

    /// Renames every staged file into place.
    pub fn commit(mut self) -> Result<Vec<PathBuf>, Error> {
        // All or nothing: previous files of the same names are moved aside first, the new
        // ones renamed in, and on any failure the new ones are removed and the previous ones
        // put back, so the folder ends as the complete new set or the previous one.
        let pending = std::mem::take(&mut self.pending);
        let mut aside: Vec<(PathBuf, PathBuf)> = Vec::new();
        let mut done: Vec<PathBuf> = Vec::new();
        let fail = |e: std::io::Error, path: &Path, aside: &[(PathBuf, PathBuf)], done: &[PathBuf]| {
            for f in done {
                let _ = std::fs::remove_file(f);
            }
            for (old, fin) in aside {
                let _ = std::fs::rename(old, fin);
            }
            for (tmp, _) in &pending {
                let _ = std::fs::remove_file(tmp);
                unregister(tmp);
            }
            Error::Output { path: path.to_path_buf(), source: e }
        };
        for (_, fin) in &pending {
            if fin.exists() {
                let name = fin.file_name().and_then(|n| n.to_str()).unwrap_or("file");
                let old = create_temp(&self.dir, name).map(|(_, p)| p);
                match old.and_then(|old| std::fs::rename(fin, &old).map(|_| old)) {
                    Ok(old) => {
                        aside.push((old, fin.clone()));
                    }
                    Err(e) => return Err(fail(e, fin, &aside, &done)),
                }
            }
        }
        for (tmp, fin) in &pending {
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
        self.committed = true;
        Ok(done)
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        if !self.committed {
            for (tmp, _) in &self.pending {
                let _ = std::fs::remove_file(tmp);
                unregister(tmp);
            }
            if self.created_dir {
                let _ = std::fs::remove_dir(&self.dir);
            }
        }
    }
}
