//! Cold index on a generated scale roster (6 athletes x 8 weeks, written to a temporary
//! folder by the same code as `splitdesk demo --athletes 6 --weeks 8`), measured through
//! the same code path as `splitdesk index` (`cli::index_cmd::index`, one worker per core,
//! a fresh journal every iteration). Then where the time goes, one thread, file by file:
//! reading the bytes, the FIT/TCX/GPX decode, the whole ingest (decode, content hash,
//! derived channels, cleaning flags), the analysis (plan choice and review), the journal
//! record (summary JSON and card), and the journal write (batched transactions).
//!
//! Run: `cargo bench --bench scale`. Figures are files per second (criterion's
//! "thrpt", elements = activity files).

use std::hint::black_box;
use std::path::Path;

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use splitdesk::cli::index_cmd::{self, BATCH};
use splitdesk::journal::{FileStat, Journal, SessionRecord};
use splitdesk::roster::Roster;
use splitdesk::workspace;

const ATHLETES: usize = 6;
const WEEKS: u32 = 8;

fn roster(dir: &Path) -> Roster {
    splitdesk::demo::scale::write(
        ATHLETES,
        WEEKS,
        splitdesk::demo::scenario::DEFAULT_SEED,
        dir,
        index_cmd::default_workers(),
    )
    .expect("scale roster written");
    Roster::open(dir).expect("scale roster opens")
}

fn bench(c: &mut Criterion) {
    let tmp = tempfile::tempdir().expect("temp dir");
    let roster = roster(&tmp.path().join("roster"));
    let files = roster.activities().count() as u64;
    let workers = index_cmd::default_workers();

    let mut g = c.benchmark_group(format!("scale_{ATHLETES}x{WEEKS}_{files}_files"));
    g.sample_size(10);
    g.throughput(Throughput::Elements(files));
    let mut run = 0u32;
    g.bench_function(format!("cold_index_{workers}_workers"), |b| {
        b.iter(|| {
            run += 1;
            let path = tmp.path().join(format!("journal-{run}.db"));
            let mut journal = Journal::open(&path).expect("journal opens");
            let report =
                index_cmd::index(&roster, &mut journal, workers, |_, _| {}).expect("index");
            assert_eq!(report.files as u64, files);
            drop(journal);
            for ext in ["", "-wal", "-shm"] {
                let _ = std::fs::remove_file(format!("{}{ext}", path.display()));
            }
            black_box(report)
        })
    });

    // ---- the split, one thread ----
    let acts: Vec<_> = roster.activities().collect();
    let bytes: Vec<Vec<u8>> = acts
        .iter()
        .map(|(_, a)| std::fs::read(&a.path).expect("read"))
        .collect();
    g.bench_function("split_1_read", |b| {
        b.iter(|| {
            for (_, a) in &acts {
                black_box(std::fs::read(&a.path).expect("read"));
            }
        })
    });
    g.bench_function("split_2_decode", |b| {
        b.iter(|| {
            for ((_, a), data) in acts.iter().zip(&bytes) {
                black_box(splitdesk::ingest::decode(data, a.format).ok());
            }
        })
    });
    g.bench_function("split_3_ingest_decode_hash_derive_clean", |b| {
        b.iter(|| {
            for ((athlete, a), data) in acts.iter().zip(&bytes) {
                black_box(
                    splitdesk::ingest::ingest_bytes(data, a.format, Some(&athlete.profile)).ok(),
                );
            }
        })
    });
    let sessions: Vec<_> = acts
        .iter()
        .zip(&bytes)
        .filter_map(|((athlete, a), data)| {
            splitdesk::ingest::ingest_bytes(data, a.format, Some(&athlete.profile))
                .ok()
                .map(|s| (*athlete, *a, s))
        })
        .collect();
    g.bench_function("split_4_analyse", |b| {
        b.iter(|| {
            for (athlete, a, s) in &sessions {
                black_box(workspace::analyse_with_plan(athlete, &a.stem, s));
            }
        })
    });
    let analysed: Vec<_> = acts
        .iter()
        .filter_map(|(athlete, a)| workspace::analyse_activity(athlete, a).ok())
        .collect();
    g.bench_function("split_5_record_json_card", |b| {
        b.iter(|| {
            for a in &analysed {
                black_box(a.record().ok());
            }
        })
    });
    let records: Vec<(SessionRecord, Option<FileStat>)> = analysed
        .iter()
        .filter_map(|a| Some((a.record().ok()?, a.file_stat.clone())))
        .collect();
    let mut wrun = 0u32;
    g.bench_function("split_6_journal_write_batched", |b| {
        b.iter(|| {
            wrun += 1;
            let path = tmp.path().join(format!("write-{wrun}.db"));
            let mut journal = Journal::open(&path).expect("journal opens");
            for chunk in records.chunks(BATCH) {
                journal
                    .upsert_sessions_batch(chunk, &[], chrono::Utc::now())
                    .expect("batch written");
            }
            drop(journal);
            for ext in ["", "-wal", "-shm"] {
                let _ = std::fs::remove_file(format!("{}{ext}", path.display()));
            }
        })
    });
    g.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
