//! Shared by the analysis benchmarks: the generated feeds under `bench-out/` and a median.
#![allow(dead_code)]

use std::path::{Path, PathBuf};

use timeweave::engine::Engine;
use timeweave_synth::Preset;

/// The preset's zip (seed 1) under `bench-out/`, written with `synth::write_feed` when missing.
pub fn feed_path(preset: Preset) -> PathBuf {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("bench-out");
    let path = dir.join(format!("{}-1.zip", preset.name()));
    if !path.exists() {
        std::fs::create_dir_all(&dir).expect("bench-out/");
        timeweave_disk::write_atomically(&path, |w| timeweave_synth::write_feed(preset, 1, w)).expect("write the generated feed");
    }
    path
}

pub fn load(preset: Preset) -> Engine {
    let mut e = Engine::new();
    timeweave_disk::load_feed(&mut e, &feed_path(preset), &mut |_, _| {}).expect("load the generated feed");
    e
}

/// The median (the mean of the middle two for an even count; NaN when empty).
pub fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    if v.is_empty() {
        return f64::NAN;
    }
    let m = v.len() / 2;
    if v.len() % 2 == 1 {
        v[m]
    } else {
        (v[m - 1] + v[m]) / 2.0
    }
}
