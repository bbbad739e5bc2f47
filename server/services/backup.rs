//! `sagline backup`: a consistent copy of a database, also while the server writes to it.
//!
//! The copy is made with `VACUUM INTO` into a temporary file beside the target, checked
//! with `PRAGMA quick_check`, flushed to disk and only then renamed to the target, so
//! the target is either the whole copy or untouched.

use crate::store;
use std::io;
use std::path::{Path, PathBuf};

/// Why no backup was made, in words that say what to do.
#[derive(Debug, thiserror::Error)]
pub enum BackupError {
    #[error("there is no database at {}; give the server's database with --db PATH", .0.display())]
    NoSource(PathBuf),
    #[error("{} is not a Sagline database", .0.display())]
    NotSagline(PathBuf),
    #[error("{} already exists; choose another --out FILE, or pass --force to replace it", .0.display())]
    TargetExists(PathBuf),
    #[error("--out {} is the database itself; choose another file", .0.display())]
    SameFile(PathBuf),
    #[error("cannot write the backup {}: {source}", .path.display())]
    Write { path: PathBuf, source: io::Error },
    #[error("the copy failed its integrity check ({0}); the target was not written")]
    Check(String),
    #[error("cannot read the database {}: {source}", .path.display())]
    Database { path: PathBuf, source: sqlx::Error },
}

/// What a backup wrote.
#[derive(Debug, Clone)]
pub struct BackupMade {
    pub path: PathBuf,
    pub bytes: u64,
}

/// Copy the database at `source` to `target`. An existing `target` is refused unless
/// `replace`. The source is opened read-only and never created or migrated.
pub async fn backup(
    source: &Path,
    target: &Path,
    replace: bool,
) -> Result<BackupMade, BackupError> {
    if !source.is_file() {
        return Err(BackupError::NoSource(source.to_path_buf()));
    }
    if target.exists() {
        if same_file(source, target) {
            return Err(BackupError::SameFile(target.to_path_buf()));
        }
        if !replace {
            return Err(BackupError::TargetExists(target.to_path_buf()));
        }
    }
    let write_error = |e| BackupError::Write {
        path: target.to_path_buf(),
        source: e,
    };
    let dir = match target.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    };
    let temp = tempfile::Builder::new()
        .prefix(".sagline-backup-")
        .suffix(".tmp")
        .tempfile_in(dir)
        .map_err(write_error)?;
    let temp_name = temp.path().to_str().ok_or_else(|| {
        write_error(io::Error::new(
            io::ErrorKind::InvalidInput,
            "the directory's path is not valid UTF-8",
        ))
    })?;

    let read_error = |e| BackupError::Database {
        path: source.to_path_buf(),
        source: e,
    };
    let mut conn = store::backup::connect_existing(source)
        .await
        .map_err(read_error)?;
    let copied = async {
        if !store::backup::has_schema(&mut conn).await? {
            return Ok(false);
        }
        store::backup::vacuum_into(&mut conn, temp_name).await?;
        Ok(true)
    }
    .await;
    close(conn).await;
    match copied {
        Ok(true) => {}
        Ok(false) => return Err(BackupError::NotSagline(source.to_path_buf())),
        // SQLITE_NOTADB: the file is something else.
        Err(sqlx::Error::Database(e)) if e.code().as_deref() == Some("26") => {
            return Err(BackupError::NotSagline(source.to_path_buf()));
        }
        Err(e) => return Err(read_error(e)),
    }

    let copy_error = |e| BackupError::Database {
        path: temp.path().to_path_buf(),
        source: e,
    };
    let mut copy = store::backup::connect_existing(temp.path())
        .await
        .map_err(copy_error)?;
    let checked = store::backup::quick_check(&mut copy).await;
    close(copy).await;
    let verdict = checked.map_err(copy_error)?;
    if verdict != "ok" {
        return Err(BackupError::Check(verdict));
    }

    temp.as_file().sync_all().map_err(write_error)?;
    let bytes = temp.as_file().metadata().map_err(write_error)?.len();
    let persisted = if replace {
        temp.persist(target)
    } else {
        temp.persist_noclobber(target)
    };
    if let Err(e) = persisted {
        return Err(if e.error.kind() == io::ErrorKind::AlreadyExists {
            BackupError::TargetExists(target.to_path_buf())
        } else {
            write_error(e.error)
        });
    }
    Ok(BackupMade {
        path: target.to_path_buf(),
        bytes,
    })
}

async fn close(conn: sqlx::SqliteConnection) {
    use sqlx::Connection;
    if let Err(e) = conn.close().await {
        tracing::warn!(error = %e, "closing a backup connection failed");
    }
}

fn same_file(a: &Path, b: &Path) -> bool {
    match (a.canonicalize(), b.canonicalize()) {
        (Ok(a), Ok(b)) => a == b,
        _ => false,
    }
}
