//! Arbitrary bytes as a feed archive: `Engine::load_zip` must return a located error or a loaded
//! feed, never panic, and a loaded feed must survive building a network and a sketch.
#![no_main]

use libfuzzer_sys::fuzz_target;
use timeweave::engine::Engine;

fuzz_target!(|data: &[u8]| {
    let mut engine = Engine::new();
    let first = match engine.load_zip("fuzz", data, &mut |_, _| {}) {
        Ok(meta) => meta.first_date,
        Err(e) => {
            assert!(!e.0.message.is_empty(), "fatal error without a message");
            return;
        }
    };
    if let Some(d) = first {
        engine.network(d);
    }
    let _ = engine.sketch();
});
