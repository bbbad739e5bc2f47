//! Analysis results for pages and exports: load the inputs, look each well up in the
//! content-keyed cache, and compute only the misses, off the async runtime and on
//! all cores.

use super::ServiceError;
use crate::services::cache::{AnalysisCache, content_key};
use crate::store;
use crate::store::wells::{SurfaceRow, WellRow};
use rayon::prelude::*;
use sagline_science::WellColumn;
use sagline_science::analysis::{self, RiftTiming, StudyInputs, WellAnalysis};
use sqlx::SqlitePool;
use std::collections::HashMap;
use std::sync::Arc;
use std::time::Duration;

/// A well's analysis, or why it could not be analysed (in words for the user).
pub type WellOutcome = Result<Arc<WellAnalysis>, String>;

/// One well of a study with its result.
#[derive(Debug, Clone)]
pub struct WellResult {
    pub well: WellRow,
    pub surfaces: Vec<SurfaceRow>,
    pub outcome: WellOutcome,
}

/// A whole study's results, remembered with the study revision they were made at
/// (the newest activity row: every change writes one). A repeated overview of an
/// unchanged study then costs one query instead of reloading every surface. At most
/// [`MEMO_STUDIES`] studies are remembered (the least recently used dropped first),
/// each for at most [`MEMO_IDLE`] after it was last asked for.
#[derive(Debug)]
pub struct StudyMemo {
    studies: moka::sync::Cache<i64, (i64, Arc<StudyResults>)>,
}

/// How many studies' results are remembered at once.
pub const MEMO_STUDIES: u64 = 32;
/// How long a study's results are remembered when nobody asks for them.
pub const MEMO_IDLE: Duration = Duration::from_secs(30 * 60);

/// The inputs and per-well results of a study.
pub type StudyResults = (StudyInputs, Vec<WellResult>);

impl Default for StudyMemo {
    fn default() -> Self {
        StudyMemo::new(MEMO_STUDIES, MEMO_IDLE)
    }
}

impl StudyMemo {
    /// Remember at most `studies` studies, each for `idle` after its last use.
    pub fn new(studies: u64, idle: Duration) -> Self {
        StudyMemo {
            studies: moka::sync::Cache::builder()
                .max_capacity(studies)
                .eviction_policy(moka::policy::EvictionPolicy::lru())
                .time_to_idle(idle)
                .build(),
        }
    }

    fn get(&self, study_id: i64, revision: i64) -> Option<Arc<StudyResults>> {
        self.studies
            .get(&study_id)
            .filter(|(r, _)| *r == revision)
            .map(|(_, v)| v)
    }

    fn put(&self, study_id: i64, revision: i64, results: Arc<StudyResults>) {
        self.studies.insert(study_id, (revision, results));
    }

    /// How many studies are remembered, once pending evictions have run.
    pub fn len(&self) -> u64 {
        self.studies.run_pending_tasks();
        self.studies.entry_count()
    }

    /// Whether no study is remembered.
    pub fn is_empty(&self) -> bool {
        self.len() == 0
    }
}

/// Every well of a study with the team's picks applied, remembered per revision.
pub async fn study_results_memo(
    db: &SqlitePool,
    cache: &Arc<AnalysisCache>,
    memo: &StudyMemo,
    study_id: i64,
) -> Result<Arc<StudyResults>, ServiceError> {
    let revision = store::activity::latest_id(db, study_id).await?;
    if let Some(hit) = memo.get(study_id, revision) {
        return Ok(hit);
    }
    let timings = super::review::study_timings(db, study_id).await?;
    let results = Arc::new(study_results(db, cache, study_id, &timings).await?);
    memo.put(study_id, revision, Arc::clone(&results));
    Ok(results)
}

/// Analyse (or fetch from the cache) every well of a study, in name order.
/// `timings` holds the team's rift timing by well id.
pub async fn study_results(
    db: &SqlitePool,
    cache: &Arc<AnalysisCache>,
    study_id: i64,
    timings: &HashMap<i64, RiftTiming>,
) -> Result<StudyResults, ServiceError> {
    let inputs = super::study_inputs(db, study_id).await?;
    let wells = store::wells::list(db, study_id).await?;
    let mut by_well: HashMap<i64, Vec<SurfaceRow>> = HashMap::new();
    for row in store::wells::all_surfaces(db, study_id).await? {
        by_well.entry(row.well_id).or_default().push(row);
    }
    let jobs: Vec<(WellRow, Vec<SurfaceRow>, Option<RiftTiming>)> = wells
        .into_iter()
        .map(|w| {
            let surfaces = by_well.remove(&w.id).unwrap_or_default();
            let timing = timings.get(&w.id).cloned();
            (w, surfaces, timing)
        })
        .collect();
    let results = run(cache, &inputs, jobs).await?;
    Ok((inputs, results))
}

/// Analyse (or fetch) one well.
pub async fn well_result(
    db: &SqlitePool,
    cache: &Arc<AnalysisCache>,
    study_id: i64,
    well: WellRow,
    timing: Option<RiftTiming>,
) -> Result<(StudyInputs, WellResult), ServiceError> {
    let inputs = super::study_inputs(db, study_id).await?;
    let surfaces = store::wells::surfaces(db, well.id).await?;
    let mut results = run(cache, &inputs, vec![(well, surfaces, timing)]).await?;
    let result = results.pop().ok_or_else(|| {
        ServiceError::Internal("the analysis returned no result for one well".into())
    })?;
    Ok((inputs, result))
}

async fn run(
    cache: &Arc<AnalysisCache>,
    inputs: &StudyInputs,
    jobs: Vec<(WellRow, Vec<SurfaceRow>, Option<RiftTiming>)>,
) -> Result<Vec<WellResult>, ServiceError> {
    let cache = Arc::clone(cache);
    let inputs = inputs.clone();
    tokio::task::spawn_blocking(move || {
        jobs.into_par_iter()
            .map(|(well, surfaces, timing)| {
                let outcome =
                    analyse_cached(&cache, &inputs, &well.name, &surfaces, timing.as_deref());
                WellResult {
                    well,
                    surfaces,
                    outcome,
                }
            })
            .collect()
    })
    .await
    .map_err(|e| ServiceError::Internal(format!("the analysis task failed: {e}")))
}

fn analyse_cached(
    cache: &AnalysisCache,
    inputs: &StudyInputs,
    name: &str,
    surfaces: &[SurfaceRow],
    timing: Option<&[(f64, f64)]>,
) -> WellOutcome {
    let column: WellColumn = super::well_column(name, surfaces).map_err(|e| e.to_string())?;
    let key = content_key(&column, inputs, timing);
    // Another request missing the same well waits for this computation.
    cache
        .get_or_compute(key, || {
            cache.count_work(1, 1);
            analysis::analyse_well(&column, inputs, timing).map_err(|e| e.to_string())
        })
        .map_err(|e| e.as_ref().clone())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn results() -> Arc<StudyResults> {
        let inputs = StudyInputs {
            params: sagline_science::ModelParameters::default(),
            catalogue: sagline_science::lithology::Catalogue::published_defaults(),
            sea_level: sagline_science::SeaLevelCurve::default(),
            thermal: sagline_science::analysis::thermal::ThermalInputs::default(),
        };
        Arc::new((inputs, Vec::new()))
    }

    #[test]
    fn the_memo_holds_at_most_its_bound_and_answers_only_its_revision() {
        let memo = StudyMemo::new(3, MEMO_IDLE);
        for study in 0..10 {
            memo.put(study, 5, results());
        }
        assert!(memo.len() <= 3, "{}", memo.len());
        assert!(memo.get(9, 5).is_some(), "the newest study is remembered");
        assert!(memo.get(9, 6).is_none(), "not for another revision");
    }

    #[test]
    fn an_unused_study_is_forgotten() {
        let memo = StudyMemo::new(3, Duration::from_millis(50));
        memo.put(1, 1, results());
        std::thread::sleep(Duration::from_millis(120));
        assert!(memo.get(1, 1).is_none());
    }
}
