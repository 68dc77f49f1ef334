//! Batch throughput: models per second for the mixture-cure template at 10,000
//! draws (the relapse-free demo beliefs, one row per seed), through
//! `batch::run` exactly as the `batch` command runs it (fits, per-model folders,
//! row records, combined tables), on a 2-thread pool: with the default lean
//! model folders, and with `--model-files full` (draws.csv and held profiles);
//! and with the demo's own base file, which leaves the draws to precision mode,
//! so that rows fit at `batch::BATCH_DRAWS` points.

use criterion::{criterion_group, criterion_main, BatchSize, Criterion, Throughput};
use priorsmith::batch::{self, ModelFiles, RunOptions};
use priorsmith::spec::Overrides;

const ROWS: usize = 8;

fn bench(c: &mut Criterion) {
    let _ = rayon::ThreadPoolBuilder::new()
        .num_threads(2)
        .build_global();
    let d = tempfile::tempdir().unwrap();
    let base = d.path().join("base.toml");
    std::fs::write(
        &base,
        include_str!("../demo-data/relapse-free-cure.toml")
            .replace("seed = 11", "seed = 11\ndraws = 10000"),
    )
    .unwrap();
    let table = d.path().join("table.csv");
    let mut t = String::from("id,simulation.seed\n");
    for k in 0..ROWS {
        t.push_str(&format!("m{k},{}\n", 1 + k));
    }
    std::fs::write(&table, t).unwrap();
    let plan = batch::plan(&base, &table, &Overrides::default()).unwrap();
    let own = d.path().join("own.toml");
    std::fs::write(&own, include_str!("../demo-data/relapse-free-cure.toml")).unwrap();
    let own_plan = batch::plan(&own, &table, &Overrides::default()).unwrap();
    let mut g = c.benchmark_group("batch");
    g.sample_size(10);
    g.throughput(Throughput::Elements(ROWS as u64));
    for (name, files, plan) in [
        (
            "mixture-cure 10k draws, 2 threads, lean folders",
            ModelFiles::Lean,
            &plan,
        ),
        (
            "mixture-cure 10k draws, 2 threads, full folders",
            ModelFiles::Full,
            &plan,
        ),
        (
            "mixture-cure batch draws (4,096), 2 threads, lean folders",
            ModelFiles::Lean,
            &own_plan,
        ),
    ] {
        let opts = RunOptions {
            model_files: files,
            ..RunOptions::default()
        };
        g.bench_function(name, |b| {
            b.iter_batched(
                || tempfile::tempdir().unwrap(),
                |out| {
                    let r = batch::run(plan, out.path(), &opts, &|_| {}).unwrap();
                    assert_eq!(r.fitted, ROWS);
                    out
                },
                BatchSize::PerIteration,
            )
        });
    }
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
