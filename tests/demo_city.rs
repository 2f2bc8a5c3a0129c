//! The demo city in demo-data/ through the library API (the CLI binary: crates/cli/tests/).
//!
//! The expected journeys come from demo-data/README.md ("Designed step-free cases", case A): that
//! is the data's own design note, recomputed by demo-data/check_city.py, not an outside source.

mod support;

use support::{demo_engine, plan, query};
use timeweave::error::QueryError;
use timeweave::route::search::StepFree;
use timeweave::Engine;

#[test]
fn an_unknown_stop_name_gives_suggestions() {
    let mut engine = demo_engine();
    match engine.resolve("Quistenferd") {
        Err(QueryError::UnknownStop { text, suggestions }) => {
            assert_eq!(text, "Quistenferd");
            assert_eq!(suggestions.first().map(String::as_str), Some("Quistenford"), "{suggestions:?}");
        }
        other => panic!("expected UnknownStop, got {other:?}"),
    }
    let err = engine.plan(&query("Quistenferd", "Tollimere", "2026-12-02", "08:00")).expect_err("an unknown origin is an error");
    assert!(matches!(err, QueryError::UnknownStop { .. }), "{err:?}");
    assert!(err.to_string().contains("did you mean: Quistenford"), "{err}");
}

#[test]
fn names_are_matched_without_case_or_accents() {
    let mut engine = demo_engine();
    let id = |engine: &Engine, text: &str| engine.resolve(text).map(|s| engine.tt.stop(s).id.clone());
    assert_eq!(id(&engine, "quistenfórd").ok().as_deref(), Some("ORR_QSF"));
    assert_eq!(id(&engine, "VELODROME").ok().as_deref(), Some("OCT_VEL"));
    assert_eq!(id(&engine, "creperie corner").ok().as_deref(), Some("OCT_CRC"));
    // And the accented typo plans like the right name (demo-data/README.md, case A standard).
    let r = plan(&mut engine, &query("quistenfórd", "tollimere", "2026-12-02", "08:00"), StepFree::Off);
    assert_eq!(r.journeys.first().map(|i| i.arrive.as_str()), Some("08:34"));
}
