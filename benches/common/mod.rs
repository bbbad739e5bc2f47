//! An invented basin for the benchmarks: a tops file of many forward-modelled wells
//! (`science::forward`), each with a clear rift, so the analysis runs its phase search,
//! fits and Monte-Carlo draws on every well as it would on a real study.
//!
//! Wells `Tarrow-0001`… (invented names) share 60 surfaces 4 Myr apart (236 Ma to
//! present); each well has its own stretching factor, rift timing and lithology cycle.
//!
//! Also the bench's admin account and its signed-in client. Each bench uses only some
//! of these helpers, hence the `dead_code` allowance.
#![allow(dead_code)]

use rayon::prelude::*;
use sagline_science::forward::{ForwardSpec, ForwardStretching, ForwardSurface, forward_well};
use sagline_science::lithology::Catalogue;
use sagline_science::{LithologyMix, MixPart, ModelParameters, SeaLevelCurve, WaterDepth};
use std::fmt::Write;

/// Wells in the benchmark study.
pub const WELLS: usize = 1_000;
/// Surfaces per well.
pub const SURFACES_PER_WELL: usize = 60;
/// Myr between two surfaces.
const SURFACE_SPACING_MYR: f64 = 4.0;

/// Shale, sandstone, a 60:40 mix and chalk in turn, shifted per well.
fn lithology(i: usize) -> LithologyMix {
    match i % 4 {
        0 => LithologyMix::single("shale"),
        1 => LithologyMix::single("sandstone"),
        2 => LithologyMix {
            parts: vec![
                MixPart {
                    lithology: "shale".into(),
                    fraction: 0.6,
                },
                MixPart {
                    lithology: "sandstone".into(),
                    fraction: 0.4,
                },
            ],
        },
        _ => LithologyMix::single("chalk"),
    }
}

/// Well `w`: beta 1.2-2.5, rift onset 152-188 Ma lasting 12-24 Myr, every seventh well
/// two-layer. Water shallows from 80 to 20 m before the rift (so pre-rift sediment fills
/// it), deepens to 120 m through the rift and shallows to 40 m by the present.
fn spec(w: usize) -> ForwardSpec {
    let beta = 1.2 + 1.3 * ((w * 37) % 100) as f64 / 100.0;
    let onset_index = 38 + (w * 7) % 10;
    let end_index = onset_index - 3 - (w * 5) % 4;
    let age = |i: usize| i as f64 * SURFACE_SPACING_MYR;
    let (onset, end, oldest) = (age(onset_index), age(end_index), age(SURFACES_PER_WELL - 1));
    let water = |a: f64| {
        if a >= onset {
            20.0 + 60.0 * (a - onset) / (oldest - onset)
        } else if a >= end {
            20.0 + 100.0 * (onset - a) / (onset - end)
        } else {
            40.0 + 80.0 * a / end
        }
    };
    let surfaces = (0..SURFACES_PER_WELL)
        .map(|i| {
            let best = water(age(i));
            ForwardSurface {
                horizon: format!("Tarrow {i:02}"),
                age_ma: age(i),
                lithology_below: (i + 1 < SURFACES_PER_WELL).then(|| lithology(i + w)),
                water_depth: WaterDepth::new(0.8 * best, 1.2 * best).expect("min below max"),
            }
        })
        .collect();
    let stretching = if w % 7 == 3 {
        ForwardStretching::TwoLayer {
            delta: 1.0 + 0.8 * (beta - 1.0),
            beta,
        }
    } else {
        ForwardStretching::Uniform { beta }
    };
    ForwardSpec {
        well: format!("Tarrow-{:04}", w + 1),
        stretching,
        rift_onset_ma: onset,
        rift_end_ma: end,
        surfaces,
    }
}

/// The tops CSV of `wells` invented wells (default parameters, catalogue, no sea-level
/// curve), built in parallel; depths to 1 cm, water depths to 0.1 m.
pub fn invented_basin_tops(wells: usize) -> String {
    let catalogue = Catalogue::published_defaults();
    let params = ModelParameters::default();
    let sea_level = SeaLevelCurve::default();
    let blocks: Vec<String> = (0..wells)
        .into_par_iter()
        .map(|w| {
            let column = forward_well(&spec(w), &catalogue, &params, &sea_level)
                .unwrap_or_else(|e| panic!("the forward model builds well {w}: {e}"));
            let mut block = String::new();
            for s in &column.surfaces {
                writeln!(
                    block,
                    "{},{},{:.2},{},{},{:.1},{:.1}",
                    column.name,
                    s.horizon,
                    s.depth_m,
                    s.age_ma,
                    s.lithology_below
                        .as_ref()
                        .map(|l| l.label())
                        .unwrap_or_default(),
                    s.water_depth.min_m,
                    s.water_depth.max_m
                )
                .expect("write to a String");
            }
            block
        })
        .collect();
    let mut csv =
        String::from("well,horizon,depth_m,age_ma,lithology,water_depth_min_m,water_depth_max_m\n");
    for block in blocks {
        csv.push_str(&block);
    }
    csv
}

/// The benches' admin account (invented).
pub const ADMIN_NAME: &str = "bench-admin";
pub const ADMIN_PASSWORD: &str = "granite-ledger-73-bench";

/// Create the bench admin in a fresh database.
pub async fn create_admin(pool: &sqlx::SqlitePool) {
    sagline::services::accounts::create_user(
        pool,
        ADMIN_NAME,
        sagline::auth::Role::Admin,
        Some(ADMIN_PASSWORD),
        "bench setup",
    )
    .await
    .expect("create the admin");
}

/// A client signed in as the bench admin on the server at `base`, and its session's
/// CSRF token for state-changing requests.
pub async fn signed_in_admin(base: &str) -> (reqwest::Client, String) {
    let client = reqwest::Client::builder()
        .no_proxy()
        .cookie_store(true)
        .redirect(reqwest::redirect::Policy::none())
        .build()
        .expect("HTTP client");
    let signed_in = client
        .post(format!("{base}/login"))
        .header(
            reqwest::header::CONTENT_TYPE,
            "application/x-www-form-urlencoded",
        )
        .body(format!("name={ADMIN_NAME}&password={ADMIN_PASSWORD}"))
        .send()
        .await
        .expect("sign in");
    assert_eq!(
        signed_in.status(),
        reqwest::StatusCode::SEE_OTHER,
        "sign in"
    );
    let session: serde_json::Value = client
        .get(format!("{base}/api/session"))
        .send()
        .await
        .expect("GET /api/session")
        .json()
        .await
        .expect("session JSON");
    let csrf = session["csrf_token"]
        .as_str()
        .expect("csrf_token")
        .to_string();
    (client, csrf)
}
