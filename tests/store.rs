//! The store, function by function, on a fresh database file: what each one writes is
//! what the others read back, refusals come back as refusals (false, None, a unique
//! violation), and one study's rows never show in another's. Expected values are the
//! values written here, not values computed by the code under test.
//!
//! Wells, surfaces and uploads are covered by the upload tests through the service
//! that owns them; wells here are made with one plain INSERT as a fixture.
//! Every name is invented.

use sagline::auth::Role;
use sagline::store::{self, activity::Change, picks::PickValues};
use sagline_science::{ModelParameters, SeaLevelPoint};
use sqlx::SqlitePool;

/// A fresh database (migrated) in a directory that lives as long as the pool is used.
async fn fresh() -> (tempfile::TempDir, SqlitePool) {
    let dir = tempfile::tempdir().expect("a temporary directory");
    let pool = store::open(&dir.path().join("store.db"))
        .await
        .expect("a new database");
    (dir, pool)
}

async fn study(pool: &SqlitePool, name: &str) -> i64 {
    store::studies::insert(pool, name, "invented", &ModelParameters::default())
        .await
        .expect("insert a study")
}

/// A well fixture: one plain row.
async fn well(pool: &SqlitePool, study_id: i64, name: &str) -> i64 {
    sqlx::query_scalar("INSERT INTO wells (study_id, name) VALUES (?, ?) RETURNING id")
        .bind(study_id)
        .bind(name)
        .fetch_one(pool)
        .await
        .expect("insert a well")
}

fn change<'a>(actor: &'a str, action: &'a str, subject: &'a str) -> Change<'a> {
    Change {
        actor,
        action,
        subject,
        before: Some("before".into()),
        after: Some("after".into()),
    }
}

mod opening {
    use super::*;

    #[tokio::test]
    async fn a_missing_file_is_created_only_when_asked() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("absent.db");
        assert!(store::open_or_create(&path, false).await.is_err());
        assert!(!path.exists(), "a refused open must not create the file");
        let pool = store::open_or_create(&path, true).await.expect("created");
        assert!(path.exists());
        pool.close().await;
        // Opening it again without create works now that it exists.
        store::open_or_create(&path, false).await.expect("reopened");
    }

    #[tokio::test]
    async fn a_write_transaction_holds_the_write_lock_from_its_start() {
        let (_dir, pool) = fresh().await;
        let mut tx = store::write_transaction(&pool).await.unwrap();
        // A second connection cannot take the write lock while the first holds it.
        let mut other = pool.acquire().await.unwrap();
        sqlx::query("PRAGMA busy_timeout = 0")
            .execute(&mut *other)
            .await
            .unwrap();
        let blocked = sqlx::query("BEGIN IMMEDIATE").execute(&mut *other).await;
        assert!(blocked.is_err(), "the write lock was not held");
        let id = store::studies::insert(&mut *tx, "Hollin Deep", "", &ModelParameters::default())
            .await
            .unwrap();
        tx.commit().await.unwrap();
        assert!(store::studies::get(&pool, id).await.unwrap().is_some());
    }
}

mod studies {
    use super::*;

    #[tokio::test]
    async fn a_study_reads_back_with_its_parameters() {
        let (_dir, pool) = fresh().await;
        let params = ModelParameters {
            crust_thickness_m: 31_500.0,
            ..ModelParameters::default()
        };
        let id = store::studies::insert(&pool, "Sorrel Rift", "two wells", &params)
            .await
            .unwrap();
        let row = store::studies::get(&pool, id)
            .await
            .unwrap()
            .expect("stored");
        assert_eq!(row.name, "Sorrel Rift");
        assert_eq!(row.description, "two wells");
        assert_eq!(row.parameters().crust_thickness_m, 31_500.0);
        assert!(
            store::studies::get(&pool, id + 100)
                .await
                .unwrap()
                .is_none()
        );
    }

    #[tokio::test]
    async fn names_are_unique_and_found() {
        let (_dir, pool) = fresh().await;
        let id = study(&pool, "Marrow Sag").await;
        let found = store::studies::find_by_name(&pool, "Marrow Sag")
            .await
            .unwrap();
        assert_eq!(found.map(|s| s.id), Some(id));
        assert!(
            store::studies::find_by_name(&pool, "Marrow")
                .await
                .unwrap()
                .is_none()
        );
        let again =
            store::studies::insert(&pool, "Marrow Sag", "", &ModelParameters::default()).await;
        match again {
            Err(sqlx::Error::Database(e)) => assert!(e.is_unique_violation(), "{e}"),
            other => panic!("a second study of the same name: {other:?}"),
        }
    }

    #[tokio::test]
    async fn the_list_counts_wells_and_parameters_update() {
        let (_dir, pool) = fresh().await;
        let a = study(&pool, "Alder Shelf").await;
        let b = study(&pool, "Birch Trough").await;
        well(&pool, a, "AS-1").await;
        well(&pool, a, "AS-2").await;
        let list = store::studies::list(&pool).await.unwrap();
        let count = |id: i64| list.iter().find(|s| s.id == id).map(|s| s.wells);
        assert_eq!((count(a), count(b)), (Some(2), Some(0)));

        let changed = ModelParameters {
            lithosphere_thickness_m: 118_000.0,
            ..ModelParameters::default()
        };
        store::studies::update_parameters(&pool, b, &changed)
            .await
            .unwrap();
        async fn plate_m(pool: &SqlitePool, id: i64) -> f64 {
            store::studies::get(pool, id)
                .await
                .unwrap()
                .unwrap()
                .parameters()
                .lithosphere_thickness_m
        }
        assert_eq!(plate_m(&pool, b).await, 118_000.0);
        assert_eq!(
            plate_m(&pool, a).await,
            ModelParameters::default().lithosphere_thickness_m
        );
    }
}

mod activity {
    use super::*;

    #[tokio::test]
    async fn entries_come_back_newest_first_filtered_and_per_study() {
        let (_dir, pool) = fresh().await;
        let a = study(&pool, "Cedar Basin").await;
        let b = study(&pool, "Dunlin Basin").await;
        assert_eq!(store::activity::latest_id(&pool, a).await.unwrap(), 0);
        store::activity::record(&pool, Some(a), change("ana", "save pick", "CB-1"))
            .await
            .unwrap();
        store::activity::record(&pool, Some(a), change("ben", "comment", "CB-1"))
            .await
            .unwrap();
        store::activity::record(&pool, Some(a), change("ana", "comment", "CB-2"))
            .await
            .unwrap();
        store::activity::record(&pool, Some(b), change("cai", "upload", "tops.csv"))
            .await
            .unwrap();
        store::activity::record(&pool, None, change("admin", "add user", "ana"))
            .await
            .unwrap();

        let all = store::activity::list(&pool, a, None, None, 10)
            .await
            .unwrap();
        let subjects: Vec<&str> = all.iter().map(|r| r.subject.as_str()).collect();
        assert_eq!(subjects, ["CB-2", "CB-1", "CB-1"]);
        assert_eq!(all[0].before_state.as_deref(), Some("before"));
        let comments = store::activity::list(&pool, a, Some("comment"), None, 10)
            .await
            .unwrap();
        assert_eq!(comments.len(), 2);
        let by_ana = store::activity::list(&pool, a, Some("comment"), Some("ana"), 10)
            .await
            .unwrap();
        assert_eq!(by_ana.len(), 1);
        assert_eq!(by_ana[0].subject, "CB-2");
        assert_eq!(
            store::activity::list(&pool, a, None, None, 1)
                .await
                .unwrap()
                .len(),
            1
        );

        let mut conn = pool.acquire().await.unwrap();
        let (kinds, actors) = store::activity::kinds_and_actors(&mut conn, a)
            .await
            .unwrap();
        assert_eq!(kinds, ["comment", "save pick"]);
        assert_eq!(actors, ["ana", "ben"]);
        assert_eq!(
            store::activity::latest_id(&pool, a).await.unwrap(),
            all[0].id
        );
        // The account change belongs to no study.
        let accounts = store::users::account_activity(&pool, 10).await.unwrap();
        assert_eq!(accounts.len(), 1);
        assert_eq!(accounts[0].action, "add user");
    }
}

mod comments {
    use super::*;

    #[tokio::test]
    async fn a_thread_reads_back_in_order_per_well() {
        let (_dir, pool) = fresh().await;
        let s = study(&pool, "Egret Graben").await;
        let (w1, w2) = (well(&pool, s, "EG-1").await, well(&pool, s, "EG-2").await);
        let first = store::comments::insert(&pool, w1, None, "ana", "top looks early")
            .await
            .unwrap();
        assert_eq!((first.well_id, first.author.as_str()), (w1, "ana"));
        store::comments::insert(&pool, w1, Some(2), "ben", "agree, event 2")
            .await
            .unwrap();
        store::comments::insert(&pool, w2, None, "ben", "other well")
            .await
            .unwrap();
        let thread = store::comments::for_well(&pool, w1).await.unwrap();
        let bodies: Vec<&str> = thread.iter().map(|c| c.body.as_str()).collect();
        assert_eq!(bodies, ["top looks early", "agree, event 2"]);
        assert_eq!(thread[1].pick_event, Some(2));
        assert_eq!(thread[0], first);
    }
}

mod lithologies {
    use super::*;

    #[tokio::test]
    async fn upsert_replaces_by_name_in_any_case_and_delete_removes() {
        let (_dir, pool) = fresh().await;
        let s = study(&pool, "Fennel Platform").await;
        let other = study(&pool, "Gorse Platform").await;
        let id = store::lithologies::upsert(&pool, s, "marl", 0.6, 0.5, 2700.0, "team")
            .await
            .unwrap();
        let again = store::lithologies::upsert(&pool, s, "Marl", 0.55, 0.45, 2690.0, "edited")
            .await
            .unwrap();
        assert_eq!(
            again, id,
            "the same name in another case is the same lithology"
        );
        let row = store::lithologies::get(&pool, s, id)
            .await
            .unwrap()
            .unwrap();
        assert_eq!(
            (
                row.surface_porosity,
                row.compaction_per_km,
                row.grain_density_kg_m3
            ),
            (0.55, 0.45, 2690.0)
        );
        assert_eq!(row.source, "edited");
        // Another study's id is not this study's.
        assert!(
            store::lithologies::get(&pool, other, id)
                .await
                .unwrap()
                .is_none()
        );
        assert_eq!(store::lithologies::list(&pool, s).await.unwrap().len(), 1);
        assert!(
            store::lithologies::list(&pool, other)
                .await
                .unwrap()
                .is_empty()
        );
        store::lithologies::delete(&pool, s, id).await.unwrap();
        assert!(store::lithologies::list(&pool, s).await.unwrap().is_empty());
    }

    #[tokio::test]
    async fn usage_counts_units_naming_it_alone_or_in_a_mix() {
        let (_dir, pool) = fresh().await;
        let s = study(&pool, "Heron Sag").await;
        let w = well(&pool, s, "HS-1").await;
        for (position, horizon, lithology) in [
            (0, "Seabed", Some("shale")),
            (1, "Top Chalk", Some("Chalk:70;shale:30")),
            (2, "Top Sand", Some("sandstone")),
            (3, "Base", None),
        ] {
            sqlx::query(
                "INSERT INTO surfaces (well_id, position, horizon, depth_m, age_ma, lithology,
                     water_depth_min_m, water_depth_max_m) VALUES (?, ?, ?, ?, ?, ?, 0, 0)",
            )
            .bind(w)
            .bind(position)
            .bind(horizon)
            .bind(100.0 * f64::from(position))
            .bind(10.0 * f64::from(position))
            .bind(lithology)
            .execute(&pool)
            .await
            .unwrap();
        }
        let mut conn = pool.acquire().await.unwrap();
        let mut counts = Vec::new();
        for name in ["shale", "chalk", "limestone"] {
            counts.push(
                store::lithologies::usage_count(&mut conn, s, name)
                    .await
                    .unwrap(),
            );
        }
        assert_eq!(counts, [2, 1, 0]);
    }
}

mod sea_level {
    use super::*;

    #[tokio::test]
    async fn replace_swaps_the_whole_curve_of_one_study() {
        let (_dir, pool) = fresh().await;
        let s = study(&pool, "Ibis Basin").await;
        let other = study(&pool, "Jay Basin").await;
        let point = |age_ma, sea_level_m| SeaLevelPoint {
            age_ma,
            sea_level_m,
        };
        let mut conn = pool.acquire().await.unwrap();
        store::sea_level::replace(&mut conn, s, &[point(50.0, 80.0), point(0.0, 0.0)])
            .await
            .unwrap();
        store::sea_level::replace(&mut conn, other, &[point(10.0, -20.0)])
            .await
            .unwrap();
        store::sea_level::replace(&mut conn, s, &[point(90.0, 150.0), point(20.0, 40.0)])
            .await
            .unwrap();
        let read = store::sea_level::points(&pool, s).await.unwrap();
        let pairs: Vec<(f64, f64)> = read.iter().map(|p| (p.age_ma, p.sea_level_m)).collect();
        // Oldest last: ordered by age.
        assert_eq!(pairs, [(20.0, 40.0), (90.0, 150.0)]);
        assert_eq!(
            store::sea_level::points(&pool, other).await.unwrap().len(),
            1
        );
    }
}

mod users {
    use super::*;

    #[tokio::test]
    async fn an_account_reads_back_changes_role_password_and_state() {
        let (_dir, pool) = fresh().await;
        assert_eq!(store::users::count(&pool).await.unwrap(), 0);
        let ana = store::users::insert(&pool, "ana", Role::Admin, "hash-one")
            .await
            .unwrap();
        let ben = store::users::insert(&pool, "ben", Role::Viewer, "hash-two")
            .await
            .unwrap();
        assert_eq!(store::users::count(&pool).await.unwrap(), 2);
        assert_eq!(store::users::count_enabled_admins(&pool).await.unwrap(), 1);
        // Names are found in any letter case, and unique in any case.
        let found = store::users::find_by_name(&pool, "ANA").await.unwrap();
        assert_eq!(found.map(|u| u.id), Some(ana));
        assert!(
            store::users::insert(&pool, "Ben", Role::Viewer, "h")
                .await
                .is_err()
        );
        let creds = store::users::credentials(&pool, "ben")
            .await
            .unwrap()
            .unwrap();
        assert_eq!(creds.password_hash, "hash-two");

        store::users::set_role(&pool, ben, Role::Admin)
            .await
            .unwrap();
        store::users::set_password_hash(&pool, ben, "hash-three")
            .await
            .unwrap();
        store::users::set_disabled(&pool, ana, true).await.unwrap();
        let ben_row = store::users::get(&pool, ben).await.unwrap().unwrap();
        assert_eq!(ben_row.role, Role::Admin);
        let creds = store::users::credentials(&pool, "ben")
            .await
            .unwrap()
            .unwrap();
        assert_eq!(creds.password_hash, "hash-three");
        assert!(
            store::users::get(&pool, ana)
                .await
                .unwrap()
                .unwrap()
                .disabled
        );
        // ana is disabled, ben is now the one enabled admin.
        assert_eq!(store::users::count_enabled_admins(&pool).await.unwrap(), 1);
        let names: Vec<String> = store::users::list(&pool)
            .await
            .unwrap()
            .into_iter()
            .map(|u| u.name)
            .collect();
        assert_eq!(names, ["ana", "ben"]);
        assert!(store::users::get(&pool, ben + 10).await.unwrap().is_none());
    }
}

mod picks {
    use super::*;

    fn values(onset: f64, end: f64, state: &str) -> PickValues<'_> {
        PickValues {
            rift_onset_ma: onset,
            rift_end_ma: end,
            model: "uniform",
            state,
        }
    }

    #[tokio::test]
    async fn a_pick_is_created_once_and_saved_only_over_its_current_version() {
        let (_dir, pool) = fresh().await;
        let s = study(&pool, "Kestrel Rift").await;
        let w = well(&pool, s, "KR-1").await;
        assert!(
            store::picks::insert(&pool, w, 1, &values(180.0, 150.0, "draft"), "ana")
                .await
                .unwrap()
        );
        // A second create of the same event is refused, not an error.
        assert!(
            !store::picks::insert(&pool, w, 1, &values(170.0, 140.0, "draft"), "ben")
                .await
                .unwrap()
        );
        let stored = store::picks::get(&pool, w, 1).await.unwrap().unwrap();
        assert_eq!((stored.rift_onset_ma, stored.version), (180.0, 1));
        assert_eq!(stored.updated_by, "ana");

        // A save against version 1 succeeds and makes version 2; a second one against 1 fails.
        assert!(
            store::picks::update(&pool, w, 1, 1, &values(175.0, 150.0, "agreed"), "ben")
                .await
                .unwrap()
        );
        assert!(
            !store::picks::update(&pool, w, 1, 1, &values(160.0, 150.0, "draft"), "ana")
                .await
                .unwrap()
        );
        let stored = store::picks::get(&pool, w, 1).await.unwrap().unwrap();
        assert_eq!(
            (stored.rift_onset_ma, stored.state.as_str(), stored.version),
            (175.0, "agreed", 2)
        );

        // Delete too names the version it was made against.
        assert!(!store::picks::delete(&pool, w, 1, 1).await.unwrap());
        assert!(store::picks::delete(&pool, w, 1, 2).await.unwrap());
        assert!(store::picks::get(&pool, w, 1).await.unwrap().is_none());
    }

    #[tokio::test]
    async fn picks_list_by_event_per_well_and_per_study_and_keep_their_checks() {
        let (_dir, pool) = fresh().await;
        let s = study(&pool, "Linnet Rift").await;
        let other = study(&pool, "Merlin Rift").await;
        let (w1, w2) = (well(&pool, s, "LR-1").await, well(&pool, s, "LR-2").await);
        let w3 = well(&pool, other, "MR-1").await;
        for (w, event) in [(w1, 2), (w1, 1), (w2, 1), (w3, 1)] {
            store::picks::insert(&pool, w, event, &values(200.0, 170.0, "draft"), "ana")
                .await
                .unwrap();
        }
        let events: Vec<i64> = store::picks::for_well(&pool, w1)
            .await
            .unwrap()
            .iter()
            .map(|p| p.event)
            .collect();
        assert_eq!(events, [1, 2]);
        let study_picks = store::picks::for_study(&pool, s).await.unwrap();
        assert_eq!(study_picks.len(), 3);
        assert!(study_picks.iter().all(|p| p.well_id != w3));
        // The schema refuses an onset younger than the end and an unknown state.
        assert!(
            store::picks::insert(&pool, w2, 2, &values(150.0, 170.0, "draft"), "ana")
                .await
                .is_err()
        );
        assert!(
            store::picks::insert(&pool, w2, 2, &values(200.0, 170.0, "maybe"), "ana")
                .await
                .is_err()
        );
    }
}

mod sessions {
    use super::*;
    use store::sessions::NewSession;

    #[tokio::test]
    async fn ending_a_users_other_sessions_keeps_the_one_named_and_other_users() {
        let (_dir, pool) = fresh().await;
        let ana = store::users::insert(&pool, "ana", Role::Admin, "h")
            .await
            .unwrap();
        let ben = store::users::insert(&pool, "ben", Role::Viewer, "h")
            .await
            .unwrap();
        for (digest, user_id) in [("a1", ana), ("a2", ana), ("a3", ana), ("b1", ben)] {
            let session = NewSession {
                token_hash: digest,
                user_id,
                csrf_token: "c",
                now: 100,
                expires_at: 1_000,
            };
            store::sessions::insert(&pool, session).await.unwrap();
        }
        let ended = store::sessions::delete_for_user_except(&pool, ana, "a2")
            .await
            .unwrap();
        assert_eq!(ended, 2);
        assert!(store::sessions::find(&pool, "a2").await.unwrap().is_some());
        assert!(store::sessions::find(&pool, "a1").await.unwrap().is_none());
        assert_eq!(
            store::sessions::count_for_user(&pool, ben).await.unwrap(),
            1
        );
    }
}

mod throttle {
    use super::*;
    use store::throttle;

    #[tokio::test]
    async fn tries_count_per_name_and_address_and_none_while_waiting() {
        let (_dir, pool) = fresh().await;
        let ip = "192.0.2.1";
        assert_eq!(
            throttle::count_try(&pool, "ana", ip, 100).await.unwrap(),
            Some(1)
        );
        // The name in any letter case is the same record; another address is another.
        assert_eq!(
            throttle::count_try(&pool, "ANA", ip, 101).await.unwrap(),
            Some(2)
        );
        assert_eq!(
            throttle::count_try(&pool, "ana", "192.0.2.2", 101)
                .await
                .unwrap(),
            Some(1)
        );
        throttle::set_wait_until(&pool, "ana", ip, 200)
            .await
            .unwrap();
        assert_eq!(
            throttle::wait_until(&pool, "ana", ip).await.unwrap(),
            Some(200)
        );
        // While the wait lasts nothing is counted; from its end on, tries count again.
        assert_eq!(
            throttle::count_try(&pool, "ana", ip, 199).await.unwrap(),
            None
        );
        assert_eq!(
            throttle::count_try(&pool, "ana", ip, 200).await.unwrap(),
            Some(3)
        );
        assert_eq!(
            throttle::wait_until(&pool, "nobody", ip).await.unwrap(),
            None
        );

        assert_eq!(throttle::clear(&pool, "Ana", ip).await.unwrap(), 1);
        assert_eq!(throttle::wait_until(&pool, "ana", ip).await.unwrap(), None);
        assert_eq!(
            throttle::wait_until(&pool, "ana", "192.0.2.2")
                .await
                .unwrap(),
            Some(0)
        );
    }

    #[tokio::test]
    async fn records_are_listed_for_accounts_cleared_by_name_and_forgotten_when_old() {
        let (_dir, pool) = fresh().await;
        let ana = store::users::insert(&pool, "Ana", Role::Viewer, "h")
            .await
            .unwrap();
        throttle::count_try(&pool, "ana", "192.0.2.1", 100)
            .await
            .unwrap();
        throttle::count_try(&pool, "ana", "192.0.2.2", 500)
            .await
            .unwrap();
        throttle::count_try(&pool, "ghost", "192.0.2.1", 100)
            .await
            .unwrap();
        throttle::set_wait_until(&pool, "ana", "192.0.2.2", 900)
            .await
            .unwrap();
        // Only names that are accounts are listed, under the account's own spelling.
        let listed = throttle::for_accounts(&pool).await.unwrap();
        let rows: Vec<(i64, &str, &str, i64, i64, i64)> = listed
            .iter()
            .map(|r| {
                let (name, client) = (r.name.as_str(), r.client.as_str());
                (
                    r.user_id,
                    name,
                    client,
                    r.tries,
                    r.wait_until,
                    r.last_try_at,
                )
            })
            .collect();
        assert_eq!(
            rows,
            [
                (ana, "Ana", "192.0.2.1", 1, 0, 100),
                (ana, "Ana", "192.0.2.2", 1, 900, 500)
            ]
        );
        // Old records whose wait is over are forgotten; a waiting one is kept.
        assert_eq!(throttle::forget_older(&pool, 600, 600).await.unwrap(), 2);
        assert_eq!(throttle::clear_name(&pool, "ANA").await.unwrap(), 1);
        assert!(throttle::for_accounts(&pool).await.unwrap().is_empty());
    }
}

mod sections {
    use super::*;
    use sagline::store::sections::SectionValues;

    const LINE: &str = r#"[{"x_m":0.0,"y_m":0.0},{"x_m":10000.0,"y_m":0.0}]"#;

    fn values<'a>(name: &'a str, te_km: f64, state: &'a str) -> SectionValues<'a> {
        SectionValues {
            name,
            points: LINE,
            max_offset_m: 2500.0,
            elastic_thickness_km: te_km,
            te_state: state,
        }
    }

    #[tokio::test]
    async fn a_section_is_stored_read_back_and_saved_only_over_its_own_version() {
        let (_dir, pool) = fresh().await;
        let s = study(&pool, "Fell Basin").await;
        let other = study(&pool, "Moor Basin").await;
        let id = store::sections::insert(&pool, s, &values("Ridge line", 20.0, "proposed"), "ana")
            .await
            .unwrap();
        let stored = store::sections::get(&pool, s, id).await.unwrap().unwrap();
        assert_eq!(stored.name, "Ridge line");
        assert_eq!(stored.points, LINE);
        assert_eq!(stored.max_offset_m, 2500.0);
        assert_eq!(stored.elastic_thickness_km, 20.0);
        assert_eq!((stored.te_state.as_str(), stored.version), ("proposed", 1));
        assert_eq!(stored.updated_by, "ana");
        assert!(
            store::sections::get(&pool, other, id)
                .await
                .unwrap()
                .is_none(),
            "another study's"
        );

        let taken =
            store::sections::insert(&pool, s, &values("Ridge line", 10.0, "proposed"), "ben").await;
        assert!(
            matches!(taken, Err(sqlx::Error::Database(ref e)) if e.is_unique_violation()),
            "one name per study: {taken:?}"
        );
        store::sections::insert(&pool, other, &values("Ridge line", 10.0, "proposed"), "ben")
            .await
            .expect("the same name in another study");

        assert!(
            store::sections::update(
                &pool,
                s,
                id,
                1,
                &values("Ridge line", 15.0, "agreed"),
                "ben"
            )
            .await
            .unwrap()
        );
        assert!(
            !store::sections::update(
                &pool,
                s,
                id,
                1,
                &values("Ridge line", 30.0, "proposed"),
                "ana"
            )
            .await
            .unwrap(),
            "stale"
        );
        let saved = store::sections::get(&pool, s, id).await.unwrap().unwrap();
        assert_eq!(
            (
                saved.elastic_thickness_km,
                saved.te_state.as_str(),
                saved.version
            ),
            (15.0, "agreed", 2)
        );
        assert_eq!(saved.updated_by, "ben");
        assert_eq!(store::sections::list(&pool, s).await.unwrap().len(), 1);

        assert!(
            !store::sections::delete(&pool, s, id, 1).await.unwrap(),
            "stale removal"
        );
        assert!(store::sections::delete(&pool, s, id, 2).await.unwrap());
        assert!(store::sections::list(&pool, s).await.unwrap().is_empty());
        assert_eq!(store::sections::list(&pool, other).await.unwrap().len(), 1);
    }

    #[tokio::test]
    async fn the_table_refuses_a_negative_te_and_an_unknown_state() {
        let (_dir, pool) = fresh().await;
        let s = study(&pool, "Fell Basin").await;
        assert!(
            store::sections::insert(&pool, s, &values("A", -1.0, "proposed"), "ana")
                .await
                .is_err()
        );
        assert!(
            store::sections::insert(&pool, s, &values("B", 10.0, "maybe"), "ana")
                .await
                .is_err()
        );
        assert!(store::sections::list(&pool, s).await.unwrap().is_empty());
    }
}
