//! The team's review: saving rift picks safely against concurrent edits, and the
//! discussion thread of each well. Every change writes its activity row in the same
//! transaction.

use super::ServiceError;
use crate::store;
use crate::store::activity::Change;
pub use crate::store::comments::CommentRow;
pub use crate::store::picks::PickRow;
use crate::store::picks::PickValues;
pub use crate::store::wells::WellRow;
use serde::Deserialize;
use sqlx::SqlitePool;

/// Pick states, in the words the team uses.
pub const PICK_STATES: [&str; 3] = ["draft", "agreed", "questioned"];
/// Models a pick can name.
pub const PICK_MODELS: [&str; 2] = ["uniform", "two-layer"];
/// The longest comment accepted (characters).
pub const MAX_COMMENT_CHARS: usize = 4000;

/// A pick as a user saves it. `version` is the version the user's page showed: 0 for
/// a new pick.
#[derive(Debug, Clone, Deserialize)]
pub struct PickEdit {
    pub event: i64,
    pub rift_onset_ma: f64,
    pub rift_end_ma: f64,
    pub model: String,
    pub state: String,
    pub version: i64,
}

fn pick_text(p: &PickRow) -> String {
    format!(
        "rift onset {} Ma, rift end {} Ma, {} model, {} (version {}, saved by {} at {})",
        p.rift_onset_ma, p.rift_end_ma, p.model, p.state, p.version, p.updated_by, p.updated_at
    )
}

fn pick_json(p: &PickRow) -> String {
    serde_json::to_string(p).unwrap_or_default()
}

/// Check a pick against the well's ages and the other event.
fn check(edit: &PickEdit, ages: (f64, f64), other: Option<&PickRow>) -> Result<(), ServiceError> {
    let bad = |m: String| Err(ServiceError::Invalid(m));
    if !(edit.event == 1 || edit.event == 2) {
        return bad("A pick is for rift event 1 or 2.".into());
    }
    if !PICK_MODELS.contains(&edit.model.as_str()) {
        return bad(format!(
            "Model '{}' is not one of: {}.",
            edit.model,
            PICK_MODELS.join(", ")
        ));
    }
    if !PICK_STATES.contains(&edit.state.as_str()) {
        return bad(format!(
            "State '{}' is not one of: {}.",
            edit.state,
            PICK_STATES.join(", ")
        ));
    }
    let (youngest, oldest) = ages;
    let (onset, end) = (edit.rift_onset_ma, edit.rift_end_ma);
    if !(onset.is_finite() && end.is_finite()) || onset <= end {
        return bad(format!(
            "The rift onset ({onset} Ma) must be older, i.e. larger, than the rift end ({end} Ma)."
        ));
    }
    if onset > oldest || end < youngest {
        return bad(format!(
            "Rift onset and end must lie within the well's ages, {youngest} to {oldest} Ma."
        ));
    }
    if let Some(o) = other {
        let clash = if edit.event == 1 {
            end < o.rift_onset_ma
        } else {
            onset > o.rift_end_ma
        };
        if clash {
            return bad(format!(
                "Rift event 1 must end before rift event 2 begins; event {} is picked at {} to {} Ma.",
                o.event, o.rift_onset_ma, o.rift_end_ma
            ));
        }
    }
    Ok(())
}

/// What a save did, for the activity log and the live stream.
#[derive(Debug, Clone)]
pub struct SavedPick {
    pub pick: PickRow,
    pub before: Option<PickRow>,
    /// `pick state` when only the state changed, else `pick` (the activity action).
    pub kind: &'static str,
}

/// Save a pick made against `edit.version`. A save against an old version is
/// refused with the stored pick in the message, and nothing is overwritten.
pub async fn save_pick(
    db: &SqlitePool,
    well: &WellRow,
    edit: &PickEdit,
    actor: &str,
) -> Result<SavedPick, ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let surfaces = store::wells::surfaces(&mut *tx, well.id).await?;
    let ages = match (surfaces.first(), surfaces.last()) {
        (Some(a), Some(b)) => (a.age_ma, b.age_ma),
        _ => {
            return Err(ServiceError::Invalid(format!(
                "Well {} has no surfaces to pick on.",
                well.name
            )));
        }
    };
    let other = store::picks::get(&mut *tx, well.id, 3 - edit.event.clamp(1, 2)).await?;
    check(edit, ages, other.as_ref())?;
    let before = store::picks::get(&mut *tx, well.id, edit.event).await?;
    let values = PickValues {
        rift_onset_ma: edit.rift_onset_ma,
        rift_end_ma: edit.rift_end_ma,
        model: &edit.model,
        state: &edit.state,
    };
    let stored = match (&before, edit.version) {
        (None, 0) => store::picks::insert(&mut *tx, well.id, edit.event, &values, actor).await?,
        (Some(b), v) if b.version == v => {
            store::picks::update(&mut *tx, well.id, edit.event, v, &values, actor).await?
        }
        _ => false,
    };
    if !stored {
        return Err(stale(
            &well.name,
            edit.event,
            edit.version,
            Attempt::Save(edit),
            before.as_ref(),
        ));
    }
    let pick = store::picks::get(&mut *tx, well.id, edit.event)
        .await?
        .ok_or_else(|| ServiceError::NotFound("the saved pick".into()))?;
    let only_state = before.as_ref().is_some_and(|b| {
        b.rift_onset_ma == pick.rift_onset_ma
            && b.rift_end_ma == pick.rift_end_ma
            && b.model == pick.model
            && b.state != pick.state
    });
    let kind = if only_state { "pick state" } else { "pick" };
    let subject = format!("{} rift event {}", well.name, edit.event);
    store::activity::record(
        &mut *tx,
        Some(well.study_id),
        Change {
            actor,
            action: kind,
            subject: &subject,
            before: before.as_ref().map(pick_json),
            after: Some(pick_json(&pick)),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(SavedPick { pick, before, kind })
}

/// What the refused user tried, for the stale message: a save, or clearing the pick.
enum Attempt<'a> {
    Save(&'a PickEdit),
    Clear,
}

fn stale(
    well: &str,
    event: i64,
    version: i64,
    attempt: Attempt<'_>,
    current: Option<&PickRow>,
) -> ServiceError {
    let tried = match attempt {
        Attempt::Save(e) => format!(
            "rift onset {} Ma, rift end {} Ma, {} model, {}",
            e.rift_onset_ma, e.rift_end_ma, e.model, e.state
        ),
        Attempt::Clear => "to clear the pick".to_string(),
    };
    let message = match current {
        Some(c) => format!(
            "Not saved: rift event {event} of well {well} was changed by {} while you were editing (your page showed version {version}, the pick is now at version {}). It now reads: {}. You tried: {tried}. Review their change and save again.",
            c.updated_by,
            c.version,
            pick_text(c),
        ),
        None => format!(
            "Not saved: rift event {event} of well {well} was removed by someone else while you were editing (your page showed version {version}). Reload to see the current state."
        ),
    };
    ServiceError::Stale {
        message,
        current: current.map(|c| serde_json::to_value(c).unwrap_or_default()),
    }
}

/// Remove a pick (the analysis returns to the proposal), made against `version`.
pub async fn delete_pick(
    db: &SqlitePool,
    well: &WellRow,
    event: i64,
    version: i64,
    actor: &str,
) -> Result<PickRow, ServiceError> {
    let mut tx = store::write_transaction(db).await?;
    let before = store::picks::get(&mut *tx, well.id, event).await?;
    let Some(b) = before.clone().filter(|b| b.version == version) else {
        return Err(stale(
            &well.name,
            event,
            version,
            Attempt::Clear,
            before.as_ref(),
        ));
    };
    store::picks::delete(&mut *tx, well.id, event, version).await?;
    let subject = format!("{} rift event {}", well.name, event);
    store::activity::record(
        &mut *tx,
        Some(well.study_id),
        Change {
            actor,
            action: "delete pick",
            subject: &subject,
            before: Some(pick_json(&b)),
            after: None,
        },
    )
    .await?;
    tx.commit().await?;
    Ok(b)
}

/// Add a comment to a well's thread (plain text; pages escape it).
pub async fn add_comment(
    db: &SqlitePool,
    well: &WellRow,
    pick_event: Option<i64>,
    body: &str,
    actor: &str,
) -> Result<CommentRow, ServiceError> {
    let body = body.trim();
    if body.is_empty() {
        return Err(ServiceError::Invalid("A comment needs some text.".into()));
    }
    if body.chars().count() > MAX_COMMENT_CHARS {
        return Err(ServiceError::Invalid(format!(
            "A comment may have at most {MAX_COMMENT_CHARS} characters."
        )));
    }
    if pick_event.is_some_and(|e| !(e == 1 || e == 2)) {
        return Err(ServiceError::Invalid(
            "A comment on a pick names rift event 1 or 2.".into(),
        ));
    }
    let mut tx = store::write_transaction(db).await?;
    let comment = store::comments::insert(&mut *tx, well.id, pick_event, actor, body).await?;
    store::activity::record(
        &mut *tx,
        Some(well.study_id),
        Change {
            actor,
            action: "comment",
            subject: &well.name,
            before: None,
            after: Some(body.to_string()),
        },
    )
    .await?;
    tx.commit().await?;
    Ok(comment)
}

/// The team's rift timing per well of a study, for the analysis: (onset, end) pairs, oldest first.
pub async fn study_timings(
    db: &SqlitePool,
    study_id: i64,
) -> Result<std::collections::HashMap<i64, Vec<(f64, f64)>>, ServiceError> {
    let mut out: std::collections::HashMap<i64, Vec<(f64, f64)>> = std::collections::HashMap::new();
    for p in store::picks::for_study(db, study_id).await? {
        out.entry(p.well_id)
            .or_default()
            .push((p.rift_onset_ma, p.rift_end_ma));
    }
    Ok(out)
}

/// A well of a study, or not found (naming the study when it is the study that is missing).
pub async fn well(db: &SqlitePool, study_id: i64, well_id: i64) -> Result<WellRow, ServiceError> {
    if let Some(w) = store::wells::get(db, study_id, well_id).await? {
        return Ok(w);
    }
    if store::studies::get(db, study_id).await?.is_none() {
        return Err(ServiceError::NotFound(format!("study {study_id}")));
    }
    Err(ServiceError::NotFound(format!(
        "well {well_id} in study {study_id}"
    )))
}

/// A well's picks and its discussion thread.
pub async fn thread(
    db: &SqlitePool,
    well_id: i64,
) -> Result<(Vec<PickRow>, Vec<CommentRow>), ServiceError> {
    let picks = store::picks::for_well(db, well_id).await?;
    let comments = store::comments::for_well(db, well_id).await?;
    Ok((picks, comments))
}
