//! Everything the well page shows, read once and computed once.
//!
//! The study, its analysis inputs (parameters, catalogue, sea level), the well, its
//! surfaces, the team's picks and the discussion are each read with one statement;
//! the analysis with the timing shown (a trial, else the saved picks, else none) and
//! the automatic proposal are then looked up in the content-keyed cache and the misses
//! computed in one blocking task, backstripping the column once for both.

use super::ServiceError;
use super::cache::{AnalysisCache, content_key};
use super::results::{WellOutcome, WellResult};
use crate::store;
use crate::store::comments::CommentRow;
use crate::store::picks::PickRow;
use crate::store::studies::StudyRow;
use sagline_science::analysis::{self, RiftTiming, StudyInputs, WellAnalysis};
use sqlx::SqlitePool;
use std::sync::Arc;

/// What the well page needs, loaded and analysed.
#[derive(Debug)]
pub struct WellPageData {
    pub study: StudyRow,
    pub inputs: StudyInputs,
    /// The well, its surfaces and its analysis with the timing shown.
    pub result: WellResult,
    pub picks: Vec<PickRow>,
    pub comments: Vec<CommentRow>,
    /// The phase search's own proposal (the same analysis when no timing was given).
    pub proposal: WellOutcome,
    /// Whether `result` was analysed with a timing (a trial or the saved picks).
    pub uses_timing: bool,
}

/// What to load beside the well and its analysis.
#[derive(Debug, Clone, Copy)]
pub struct Want {
    /// The discussion thread.
    pub comments: bool,
    /// The automatic proposal beside the team's timing.
    pub proposal: bool,
}

/// The well page of `well_id` in `study_id`. `trial` (the pick editor's preview) wins
/// over the saved picks.
pub async fn load(
    db: &SqlitePool,
    cache: &Arc<AnalysisCache>,
    study_id: i64,
    well_id: i64,
    trial: Option<RiftTiming>,
    want: Want,
) -> Result<WellPageData, ServiceError> {
    let study = store::studies::get(db, study_id)
        .await?
        .ok_or_else(|| ServiceError::NotFound(format!("study {study_id}")))?;
    let well = store::wells::get(db, study_id, well_id)
        .await?
        .ok_or_else(|| ServiceError::NotFound(format!("well {well_id} in study {study_id}")))?;
    let lithologies = store::lithologies::list(db, study_id).await?;
    let sea_level = store::sea_level::points(db, study_id).await?;
    let inputs = super::inputs_of(&study, lithologies, sea_level)?;
    let surfaces = store::wells::surfaces(db, well.id).await?;
    let picks = store::picks::for_well(db, well.id).await?;
    let comments = if want.comments {
        store::comments::for_well(db, well.id).await?
    } else {
        Vec::new()
    };
    let saved: Option<RiftTiming> = (!picks.is_empty()).then(|| {
        picks
            .iter()
            .map(|p| (p.rift_onset_ma, p.rift_end_ma))
            .collect()
    });
    let timing = trial.or(saved);
    let uses_timing = timing.is_some();
    let job = Job {
        cache: Arc::clone(cache),
        inputs,
        name: well.name.clone(),
        surfaces,
        timing,
        proposal: want.proposal,
    };
    let (inputs, surfaces, outcome, proposal) = tokio::task::spawn_blocking(move || job.run())
        .await
        .map_err(|e| ServiceError::Internal(format!("the analysis task failed: {e}")))?;
    Ok(WellPageData {
        study,
        inputs,
        result: WellResult {
            well,
            surfaces,
            outcome,
        },
        picks,
        comments,
        proposal,
        uses_timing,
    })
}

/// The analyses of one well, run off the async workers.
struct Job {
    cache: Arc<AnalysisCache>,
    inputs: StudyInputs,
    name: String,
    surfaces: Vec<store::wells::SurfaceRow>,
    timing: Option<RiftTiming>,
    proposal: bool,
}

impl Job {
    fn run(
        self,
    ) -> (
        StudyInputs,
        Vec<store::wells::SurfaceRow>,
        WellOutcome,
        WellOutcome,
    ) {
        let (outcome, proposal) = self.analyse();
        (self.inputs, self.surfaces, outcome, proposal)
    }

    /// The analysis with the timing and (if asked, and different) the proposal.
    fn analyse(&self) -> (WellOutcome, WellOutcome) {
        let column = match super::well_column(&self.name, &self.surfaces) {
            Ok(c) => c,
            Err(e) => return (Err(e.to_string()), Err(e.to_string())),
        };
        let timing = self.timing.as_deref();
        let key = content_key(&column, &self.inputs, timing);
        let proposal_key =
            (self.proposal && timing.is_some()).then(|| content_key(&column, &self.inputs, None));
        let hit = self.cache.get(key);
        let proposal_hit = proposal_key.and_then(|k| self.cache.get(k));
        let needs_proposal = proposal_key.is_some() && proposal_hit.is_none();
        if hit.is_some() && !needs_proposal {
            let a = hit.map(Ok).unwrap_or_else(|| Err("no result".into()));
            let p = proposal_hit.map(Ok).unwrap_or_else(|| a.clone());
            return (a, p);
        }
        // One backstrip serves both interpretations.
        let history = match sagline_science::backstrip::backstrip(
            &column,
            &self.inputs.catalogue,
            &self.inputs.params,
            &self.inputs.sea_level,
        ) {
            Ok(h) => h,
            Err(e) => {
                self.cache.count_work(1, 0);
                return (Err(e.to_string()), Err(e.to_string()));
            }
        };
        let interpret = |timing: Option<&[(f64, f64)]>| {
            let interpretation = analysis::interpret(&history, &self.inputs.params, timing)
                .map_err(|e| e.to_string());
            let thermal = analysis::thermal_of(&column, &history, &interpretation, &self.inputs);
            Arc::new(WellAnalysis {
                history: history.clone(),
                interpretation,
                thermal,
            })
        };
        let mut interpretations = 0;
        let outcome = match hit {
            Some(a) => a,
            None => {
                interpretations += 1;
                let a = interpret(timing);
                self.cache.insert(key, Arc::clone(&a));
                a
            }
        };
        let proposal = match (proposal_key, proposal_hit) {
            (Some(_), Some(p)) => p,
            (Some(k), None) => {
                interpretations += 1;
                let p = interpret(None);
                self.cache.insert(k, Arc::clone(&p));
                p
            }
            (None, _) => Arc::clone(&outcome),
        };
        self.cache.count_work(1, interpretations);
        (Ok(outcome), Ok(proposal))
    }
}
