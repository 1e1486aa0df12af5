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
}

impl Staging {
    /// Opens (creating if needed) `dir` and checks that it is writable. `inputs` are files
    /// that must never be overwritten.
    pub fn new(dir: &Path, inputs: &[&Path]) -> Result<Staging, Error> {
        let err = |e| Error::Output { path: dir.to_path_buf(), source: e };
        let created_dir = !dir.exists();
        std::fs::create_dir_all(dir).map_err(err)?;
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
        Ok(Staging { dir: dir.to_path_buf(), created_dir, pending: Vec::new(), protected, committed: false })
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
        let res =
            tempfile::Builder::new().prefix(&format!(".{name}.")).suffix(".partial").tempfile_in(&self.dir).and_then(
                |tmp| {
                    let (file, path) = tmp.keep().map_err(|e| e.error)?;
                    let mut w = BufWriter::new(file);
                    let written = f(&mut w)
                        .and_then(|_| w.flush())
                        .and_then(|_| w.into_inner().map_err(|e| e.into_error())?.sync_all());
                    match written {
                        Ok(()) => Ok(path),
                        Err(e) => {
                            let _ = std::fs::remove_file(&path);
                            Err(e)
                        }
                    }
                },
            );
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
        let mut done = Vec::new();
        for (tmp, fin) in std::mem::take(&mut self.pending) {
            std::fs::rename(&tmp, &fin).map_err(|e| Error::Output { path: fin.clone(), source: e })?;
            done.push(fin);
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
            }
            if self.created_dir {
                let _ = std::fs::remove_dir(&self.dir);
            }
        }
    }
}
