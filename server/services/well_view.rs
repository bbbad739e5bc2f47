//! The well page's view: the column, the restored column at each age, the analysis in
//! the contract's shape, the team's picks and thread, and the proposal beside them.

use super::ServiceError;
use super::cache::AnalysisCache;
use super::exports::{ExportMeta, csv_text};
use super::results::WellResult;
use super::review::{CommentRow, PickRow, WellRow};
use super::studies::StudyInfo;
use super::well_charts;
use super::well_page::{self, Want};
use crate::store::wells::SurfaceRow;
use sagline_charts::ChartSize;
use sagline_science::analysis::{self, StudyInputs, WellAnalysis, contract::WellOut};
use serde::{Deserialize, Serialize};
use sqlx::SqlitePool;
use std::sync::Arc;

/// One row of the column table: a surface and the unit below it.
#[derive(Debug, Clone, Serialize)]
pub struct ColumnRow {
    pub horizon: String,
    pub depth_m: f64,
    pub age_ma: f64,
    /// Lithology of the unit below this surface (None on the deepest surface).
    pub unit_lithology: Option<String>,
    /// Present thickness of the unit below (m).
    pub unit_thickness_m: Option<f64>,
    pub water_depth_min_m: f64,
    pub water_depth_max_m: f64,
    pub eroded_m: Option<f64>,
    pub eroded_at_ma: Option<f64>,
}

pub fn column_rows(surfaces: &[SurfaceRow]) -> Vec<ColumnRow> {
    surfaces
        .iter()
        .enumerate()
        .map(|(i, s)| ColumnRow {
            horizon: s.horizon.clone(),
            depth_m: s.depth_m,
            age_ma: s.age_ma,
            unit_lithology: s.lithology.clone(),
            unit_thickness_m: surfaces.get(i + 1).map(|below| below.depth_m - s.depth_m),
            water_depth_min_m: s.water_depth_min_m,
            water_depth_max_m: s.water_depth_max_m,
            eroded_m: s.eroded_m,
            eroded_at_ma: s.eroded_at_ma,
        })
        .collect()
}

/// One unit of the column restored to its position at an age.
#[derive(Debug, Clone, Serialize)]
pub struct RestoredUnitView {
    pub top_horizon: String,
    pub base_horizon: String,
    pub lithology: String,
    pub top_m: f64,
    pub base_m: f64,
    pub thickness_m: f64,
    pub mean_porosity: f64,
    pub density_kg_m3: f64,
}

/// The restored column at one age.
#[derive(Debug, Clone, Serialize)]
pub struct RestoredStepView {
    pub age_ma: f64,
    pub depositional_horizon: String,
    pub units: Vec<RestoredUnitView>,
}

#[derive(Debug, Serialize)]
pub struct WellView {
    pub study: StudyInfo,
    pub well: WellRow,
    pub column: Vec<ColumnRow>,
    /// The analysis in the shape of the batch JSON contract (None if it failed).
    pub analysis: Option<WellOut>,
    /// The restored column at every age, youngest first.
    pub restored: Vec<RestoredStepView>,
    /// Why the well could not be analysed, in words a user can act on.
    pub analysis_error: Option<String>,
    /// The team's picks (rift events 1 and 2) and the discussion.
    pub picks: Vec<PickRow>,
    pub comments: Vec<CommentRow>,
    /// What the phase search proposes on its own.
    pub proposal: Option<ProposalView>,
    /// The trial timing shown instead of the saved picks, if any.
    pub trial: Option<Trial>,
}

fn restored_steps(a: &WellAnalysis) -> Vec<RestoredStepView> {
    let h = &a.history;
    h.steps
        .iter()
        .rev()
        .map(|s| RestoredStepView {
            age_ma: s.age_ma,
            depositional_horizon: s.depositional_horizon.clone(),
            units: s
                .units
                .iter()
                .map(|u| RestoredUnitView {
                    top_horizon: h
                        .top_horizon(u)
                        .map(str::to_string)
                        .unwrap_or_else(|| format!("eroded section on {}", h.base_horizon(u))),
                    base_horizon: h.base_horizon(u).to_string(),
                    lithology: h.lithology(u).to_string(),
                    top_m: u.top_m,
                    base_m: u.base_m,
                    thickness_m: u.base_m - u.top_m,
                    mean_porosity: u.mean_porosity,
                    density_kg_m3: u.density_kg_m3,
                })
                .collect(),
        })
        .collect()
}

/// The well page's view and the analysis its charts are drawn from (None when the
/// well could not be analysed).
pub async fn view(
    db: &SqlitePool,
    cache: &Arc<AnalysisCache>,
    study_id: i64,
    well_id: i64,
    trial: Option<&Trial>,
) -> Result<(WellView, Option<Arc<WellAnalysis>>), ServiceError> {
    let want = Want {
        comments: true,
        proposal: true,
    };
    let d = well_page::load(
        db,
        cache,
        study_id,
        well_id,
        trial.and_then(Trial::timing),
        want,
    )
    .await?;
    let r = d.result;
    // The automatic proposal beside the team's pick.
    let proposal = d.proposal.as_ref().ok().map(|a| ProposalView::of(a));
    let (analysis, restored, analysis_error) = match &r.outcome {
        Ok(a) => (Some(analysis::well_out(a)), restored_steps(a), None),
        Err(e) => (None, Vec::new(), Some(e.clone())),
    };
    let drawn = r.outcome.as_ref().ok().map(Arc::clone);
    let view = WellView {
        study: StudyInfo::from(&d.study),
        column: column_rows(&r.surfaces),
        well: r.well,
        analysis,
        restored,
        analysis_error,
        picks: d.picks,
        comments: d.comments,
        proposal,
        trial: trial.copied().filter(|t| t.timing().is_some()),
    };
    Ok((view, drawn))
}

/// A well's study inputs and analysis with the saved picks, for its downloads.
pub async fn for_download(
    db: &SqlitePool,
    cache: &Arc<AnalysisCache>,
    study_id: i64,
    well_id: i64,
) -> Result<(StudyInfo, StudyInputs, WellResult), ServiceError> {
    let want = Want {
        comments: false,
        proposal: false,
    };
    let d = well_page::load(db, cache, study_id, well_id, None, want).await?;
    Ok((StudyInfo::from(&d.study), d.inputs, d.result))
}

impl WellView {
    /// The team's pick of rift event 1 or 2.
    pub fn pick(&self, event: &i64) -> Option<&PickRow> {
        self.picks.iter().find(|p| p.event == *event)
    }

    /// What the pick form of an event starts with: a trial timing being looked at
    /// (event 1), else the saved pick, else the proposal (event 1), else empty.
    fn form_value(&self, event: i64, of: impl Fn(f64, f64) -> f64) -> String {
        let trial = (event == 1)
            .then(|| self.trial.as_ref().and_then(Trial::timing))
            .flatten()
            .map(|t| of(t[0].0, t[0].1));
        let pick = self
            .pick(&event)
            .map(|p| of(p.rift_onset_ma, p.rift_end_ma));
        let proposal = (event == 1)
            .then_some(self.proposal.as_ref())
            .flatten()
            .and_then(|p| Some(of(p.rift_onset_ma?, p.rift_end_ma?)));
        trial
            .or(pick)
            .or(proposal)
            .map(|v| v.to_string())
            .unwrap_or_default()
    }

    pub fn form_onset(&self, event: &i64) -> String {
        self.form_value(*event, |onset, _| onset)
    }

    pub fn form_end(&self, event: &i64) -> String {
        self.form_value(*event, |_, end| end)
    }
}

/// The automatic proposal, shown beside the team's pick.
#[derive(Debug, Clone, Serialize)]
pub struct ProposalView {
    pub rift_onset_ma: Option<f64>,
    pub rift_end_ma: Option<f64>,
    pub beta: Option<f64>,
    pub rms_misfit_m: Option<f64>,
    pub events: usize,
}

impl ProposalView {
    fn of(a: &WellAnalysis) -> Self {
        // Only the fit: building the whole history of the contract is not needed here.
        let st = a
            .interpretation
            .as_ref()
            .ok()
            .and_then(analysis::stretching_out);
        ProposalView {
            rift_onset_ma: st.as_ref().map(|s| s.rift_onset_ma),
            rift_end_ma: st.as_ref().map(|s| s.rift_end_ma),
            beta: st.as_ref().map(|s| s.beta),
            rms_misfit_m: st.as_ref().map(|s| s.rms_misfit_m),
            events: st.as_ref().map(|s| s.rift_events.len()).unwrap_or(0),
        }
    }
}

/// A rift timing tried in the pick editor without saving (query parameters
/// `trial_onset_ma`, `trial_end_ma`): the page refits and redraws with it.
#[derive(Debug, Clone, Copy, Default, Deserialize, Serialize)]
pub struct Trial {
    #[serde(alias = "rift_onset_ma")]
    pub trial_onset_ma: Option<f64>,
    #[serde(alias = "rift_end_ma")]
    pub trial_end_ma: Option<f64>,
}

impl Trial {
    fn timing(&self) -> Option<Vec<(f64, f64)>> {
        match (self.trial_onset_ma, self.trial_end_ma) {
            (Some(o), Some(e)) if o.is_finite() && e.is_finite() => Some(vec![(o, e)]),
            _ => None,
        }
    }
}

/// A download of the well page: its type, file name and content.
#[derive(Debug)]
pub struct WellFile {
    pub content_type: &'static str,
    pub name: String,
    pub body: FileBody,
}

/// Text as it is, or a chart (SVG) to rasterise with its caption.
#[derive(Debug)]
pub enum FileBody {
    Text(String),
    Png(String),
}

impl WellFile {
    fn text(content_type: &'static str, name: &str, body: String) -> Self {
        WellFile {
            content_type,
            name: name.to_string(),
            body: FileBody::Text(body),
        }
    }

    fn png(name: &str, svg: &str) -> Self {
        WellFile {
            content_type: "image/png",
            name: name.to_string(),
            body: FileBody::Png(svg.to_string()),
        }
    }
}

/// One download of the well page, built from its analysis.
pub fn well_file(
    meta: &ExportMeta,
    r: &WellResult,
    a: &WellAnalysis,
    file: &str,
) -> Option<WellFile> {
    let name = &r.well.name;
    let size = ChartSize::default();
    let svg = |body: String| {
        WellFile::text(
            "image/svg+xml",
            &format!("{name}-{file}"),
            meta.stamp_svg(&body),
        )
    };
    let csv = |what: &str, header: &[&str], rows: Vec<Vec<String>>| {
        WellFile::text(
            "text/csv; charset=utf-8",
            &format!("{name}-{file}"),
            csv_text(meta, what, header, &rows),
        )
    };
    Some(match file {
        "subsidence.svg" => svg(sagline_charts::subsidence_chart(
            &well_charts::subsidence_data(name, a),
            size,
        )),
        "burial.svg" => svg(sagline_charts::burial_chart(
            &well_charts::burial_data(name, a),
            size,
        )),
        "heat-flow.svg" => svg(sagline_charts::heat_flow_chart(
            &well_charts::heat_flow_data(name, a),
            size,
        )),
        "subsidence.png" => {
            let chart =
                sagline_charts::subsidence_chart(&well_charts::subsidence_data(name, a), size);
            WellFile::png(&format!("{name}-{file}"), &chart)
        }
        "burial.png" => {
            let chart = sagline_charts::burial_chart(&well_charts::burial_data(name, a), size);
            WellFile::png(&format!("{name}-{file}"), &chart)
        }
        "maturity.svg" => svg(sagline_charts::maturity_chart(
            &well_charts::maturity_data(name, a),
            size,
        )),
        "maturity.png" => {
            let chart = sagline_charts::maturity_chart(&well_charts::maturity_data(name, a), size);
            WellFile::png(&format!("{name}-{file}"), &chart)
        }
        "maturity.csv" => {
            let out = analysis::well_out(a);
            let rows = out
                .thermal
                .iter()
                .flat_map(|t| {
                    t.horizons.iter().flat_map(|h| {
                        h.path.iter().map(|p| {
                            vec![
                                name.clone(),
                                h.horizon.clone(),
                                format!("{:.3}", p.age_ma),
                                format!("{:.2}", p.temperature_c),
                                format!("{:.4}", p.ro_percent),
                            ]
                        })
                    })
                })
                .collect();
            csv(
                &format!(
                    "Modelled temperature and EASY%Ro of every horizon through time, well {name} \
                     (estimates from a model, not measurements)"
                ),
                &[
                    "well",
                    "horizon",
                    "age_ma",
                    "temperature_c",
                    "easy_ro_percent",
                ],
                rows,
            )
        }
        "heat-flow.png" => {
            let chart =
                sagline_charts::heat_flow_chart(&well_charts::heat_flow_data(name, a), size);
            WellFile::png(&format!("{name}-{file}"), &chart)
        }
        "history.csv" => {
            let out = analysis::well_out(a);
            csv(
                &format!("Backstripping history of well {name}"),
                &analysis::CSV_HEADER,
                analysis::csv_rows(&out),
            )
        }
        "heat-flow.csv" => {
            let rows = a
                .interpretation
                .as_ref()
                .map(|i| {
                    i.heat_flow_grid
                        .iter()
                        .map(|p| {
                            vec![
                                name.clone(),
                                format!("{:.3}", p.age_ma),
                                format!("{:.3}", p.value),
                            ]
                        })
                        .collect()
                })
                .unwrap_or_default();
            csv(
                &format!(
                    "Basal (mantle) heat flow of the fitted model, no radiogenic heat, well {name}"
                ),
                &["well", "age_ma", "heat_flow_mw_m2"],
                rows,
            )
        }
        "column.csv" => {
            let rows = column_rows(&r.surfaces)
                .into_iter()
                .map(|c| {
                    vec![
                        name.clone(),
                        c.horizon,
                        c.depth_m.to_string(),
                        c.age_ma.to_string(),
                        c.unit_lithology.unwrap_or_default(),
                        c.water_depth_min_m.to_string(),
                        c.water_depth_max_m.to_string(),
                        c.eroded_m.map(|x| x.to_string()).unwrap_or_default(),
                        c.eroded_at_ma.map(|x| x.to_string()).unwrap_or_default(),
                    ]
                })
                .collect();
            csv(
                &format!("Column of well {name}"),
                &[
                    "well",
                    "horizon",
                    "depth_m",
                    "age_ma",
                    "lithology",
                    "water_depth_min_m",
                    "water_depth_max_m",
                    "eroded_m",
                    "eroded_at_ma",
                ],
                rows,
            )
        }
        "analysis.json" => {
            let body = serde_json::json!({ "export": meta, "wells": [analysis::well_out(a)] });
            WellFile::text(
                "application/json",
                &format!("{name}-analysis.json"),
                serde_json::to_string_pretty(&body).unwrap_or_default(),
            )
        }
        _ => return None,
    })
}
