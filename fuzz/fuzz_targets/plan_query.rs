//! Arbitrary JSON as a planning query on the demo city (both feeds): `Engine::plan` returns a
//! result or a query error, never panics.
#![no_main]

use std::sync::{Mutex, OnceLock};

use libfuzzer_sys::fuzz_target;
use timeweave::engine::{Engine, PlanQuery};

fn engine() -> &'static Mutex<Engine> {
    static ENGINE: OnceLock<Mutex<Engine>> = OnceLock::new();
    ENGINE.get_or_init(|| {
        let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("../demo-data");
        let mut e = Engine::new();
        for feed in ["oskerveld-city", "oskerveld-rail"] {
            timeweave_disk::load_feed(&mut e, &root.join(feed), &mut |_, _| {}).expect("demo feed loads");
        }
        Mutex::new(e)
    })
}

fuzz_target!(|data: &[u8]| {
    let Ok(q) = serde_json::from_slice::<PlanQuery>(data) else { return };
    let mut e = engine().lock().unwrap_or_else(|p| p.into_inner());
    if let Ok(r) = e.plan(&q) {
        for it in &r.journeys {
            assert!(it.arrive_s >= it.depart_s, "itinerary arrives before it departs: {it:?}");
        }
    }
});
