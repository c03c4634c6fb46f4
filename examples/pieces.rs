use catena::check::check_bytes;
use catena::eval::{lower, Env};
use catena::model::PartsCache;
use std::time::Instant;
fn main() {
    let name = std::env::args().nth(1).unwrap();
    let chain_name = std::env::args().nth(2).unwrap();
    let dir = std::path::Path::new("specs");
    let bytes = std::fs::read(dir.join(&name)).unwrap();
    let checked = check_bytes(&name, &bytes, dir, &mut PartsCache::default());
    let chain = checked
        .chains
        .iter()
        .find(|c| c.name == chain_name)
        .unwrap();
    let plan = lower(chain).unwrap();
    let env = Env {
        measurand: (plan.range.0 + plan.range.1) / 2.0,
        ambient: plan.reference - 20.0,
        cold_junction: plan.reference - 20.0,
    };
    let n = 2_000_000;
    let mut values = plan.nominal.clone();
    let cal = plan.calibration(&values).unwrap();
    let t = Instant::now();
    let mut acc = 0.0;
    for i in 0..n {
        values[1] = plan.nominal[1] * (1.0 + 1e-9 * (i % 7) as f64);
        acc += plan.exact_code(&values, &env, plan.adc).unwrap();
    }
    println!(
        "exact_code           {:6.1} ns {acc}",
        t.elapsed().as_nanos() as f64 / n as f64
    );
    let t = Instant::now();
    let mut acc = 0.0;
    for i in 0..n {
        values[1] = plan.nominal[1] * (1.0 + 1e-9 * (i % 7) as f64);
        acc += plan
            .unquantized_reading_calibrated(&values, &env, &cal)
            .unwrap();
    }
    println!(
        "reading (cal known)  {:6.1} ns {acc}",
        t.elapsed().as_nanos() as f64 / n as f64
    );
    let t = Instant::now();
    let mut acc = 0.0;
    for i in 0..n {
        values[1] = plan.nominal[1] * (1.0 + 1e-9 * (i % 7) as f64);
        acc += plan.unquantized_reading(&values, &env).unwrap();
    }
    println!(
        "reading (full)       {:6.1} ns {acc}",
        t.elapsed().as_nanos() as f64 / n as f64
    );
}
