//! Output staging: every file is written under a temporary name in the output folder and
//! renamed into place only when all of them were written, so a failure leaves no partial
//! output. Inputs are never overwritten.

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
        let probe = dir.join(format!(".lobemap-write-test-{}", std::process::id()));
        if let Err(e) = File::create(&probe).and_then(|mut f| f.write_all(b"x")) {
            let _ = std::fs::remove_file(&probe);
            if created_dir {
                let _ = std::fs::remove_dir(dir);
            }
            return Err(err(e));
        }
        let _ = std::fs::remove_file(&probe);
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
        let tmp = self.dir.join(format!(".{name}.partial-{}", std::process::id()));
        let res = File::create(&tmp).and_then(|file| {
            let mut w = BufWriter::new(file);
            f(&mut w)?;
            w.flush()?;
            w.into_inner().map_err(|e| e.into_error())?.sync_all()
        });
        if let Err(e) = res {
            let _ = std::fs::remove_file(&tmp);
            return Err(Error::Output { path: fin, source: e });
        }
        self.pending.push((tmp, fin));
        Ok(())
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
