//! Which crate computes the distances fastest on descry's workload: one
//! value compared with many short values (the index's verification step).
//!
//!     cargo run --release --example distance_crates
//!
//! Compares `strsim` (plain dynamic programming), `rapidfuzz` (bit-parallel,
//! with a cached pattern for one-against-many) and `triple_accel` (SIMD,
//! bytes only) on the same pairs, checks they agree, and prints nanoseconds
//! per pair. The figures are in docs/cluster.md.

use std::hint::black_box;
use std::time::Instant;

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rapidfuzz::distance::{jaro_winkler, levenshtein, osa};

const WORDS: &[&str] = &[
    "hydrostatic",
    "powershift",
    "manual",
    "automatic",
    "shuttle",
    "creeper",
    "speed",
    "spd",
    "turbo",
    "diesel",
    "gasoline",
    "cyl",
    "pump",
    "filter",
    "valve",
    "bearing",
    "hose",
    "seal",
    "front",
    "rear",
    "left",
    "right",
];

/// Realistic short values: a few words and a number, sometimes misspelt.
fn value(rng: &mut ChaCha8Rng) -> String {
    let mut words: Vec<String> = (0..rng.gen_range(2..5))
        .map(|_| WORDS[rng.gen_range(0..WORDS.len())].to_owned())
        .collect();
    words.insert(
        rng.gen_range(0..words.len()),
        rng.gen_range(1..40).to_string(),
    );
    let mut s: Vec<char> = words.join(" ").chars().collect();
    if rng.gen_bool(0.5) {
        let i = rng.gen_range(0..s.len() - 1);
        s.swap(i, i + 1);
    }
    s.into_iter().collect()
}

fn time<F: FnMut() -> u64>(name: &str, pairs: usize, mut f: F) -> f64 {
    let start = Instant::now();
    let check = f();
    let ns = start.elapsed().as_nanos() as f64 / pairs as f64;
    println!("  {name:<44} {ns:>8.1} ns/pair   (checksum {check})");
    ns
}

fn main() {
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    let probes: Vec<String> = (0..300).map(|_| value(&mut rng)).collect();
    let others: Vec<String> = (0..2000).map(|_| value(&mut rng)).collect();
    let pairs = probes.len() * others.len();
    let other_chars: Vec<Vec<char>> = others.iter().map(|s| s.chars().collect()).collect();
    println!(
        "{} probes x {} values = {pairs} pairs, mean length {:.1} characters\n",
        probes.len(),
        others.len(),
        others.iter().map(|s| s.len()).sum::<usize>() as f64 / others.len() as f64
    );

    // Agreement first: the crates must compute the same thing.
    let mut disagreements = 0;
    for p in &probes[..20] {
        for o in &others {
            disagreements +=
                (strsim::levenshtein(p, o) != levenshtein::distance(p.chars(), o.chars())) as usize;
            disagreements +=
                (strsim::osa_distance(p, o) != osa::distance(p.chars(), o.chars())) as usize;
            disagreements +=
                (triple_accel::levenshtein::levenshtein_exp(p.as_bytes(), o.as_bytes()) as usize
                    != levenshtein::distance(p.chars(), o.chars())) as usize;
            disagreements += (triple_accel::levenshtein::rdamerau_exp(p.as_bytes(), o.as_bytes())
                as usize
                != osa::distance(p.chars(), o.chars())) as usize;
            let jw =
                (strsim::jaro_winkler(p, o) - jaro_winkler::similarity(p.chars(), o.chars())).abs();
            disagreements += (jw > 1e-9) as usize;
        }
    }
    println!("disagreements between crates on 40,000 pairs x 5 checks: {disagreements}\n");

    println!("Levenshtein");
    time("strsim::levenshtein", pairs, || {
        probes
            .iter()
            .flat_map(|p| others.iter().map(move |o| strsim::levenshtein(p, o) as u64))
            .sum()
    });
    time("triple_accel::levenshtein_exp (bytes)", pairs, || {
        probes
            .iter()
            .flat_map(|p| {
                others.iter().map(move |o| {
                    triple_accel::levenshtein::levenshtein_exp(p.as_bytes(), o.as_bytes()) as u64
                })
            })
            .sum()
    });
    time(
        "triple_accel::levenshtein_simd_k k=2 (bytes)",
        pairs,
        || {
            probes
                .iter()
                .flat_map(|p| {
                    others.iter().map(move |o| {
                        triple_accel::levenshtein::levenshtein_simd_k(p.as_bytes(), o.as_bytes(), 2)
                            .unwrap_or(3) as u64
                    })
                })
                .sum()
        },
    );
    time("rapidfuzz levenshtein::distance", pairs, || {
        probes
            .iter()
            .flat_map(|p| {
                others
                    .iter()
                    .map(move |o| levenshtein::distance(p.chars(), o.chars()) as u64)
            })
            .sum()
    });
    time("rapidfuzz BatchComparator, cutoff 2", pairs, || {
        let args = levenshtein::Args::default().score_cutoff(2);
        probes
            .iter()
            .map(|p| {
                let c = levenshtein::BatchComparator::new(p.chars());
                other_chars
                    .iter()
                    .map(|o| c.distance_with_args(o.iter().copied(), &args).unwrap_or(3) as u64)
                    .sum::<u64>()
            })
            .sum()
    });

    println!("\nOptimal string alignment");
    time("strsim::osa_distance", pairs, || {
        probes
            .iter()
            .flat_map(|p| {
                others
                    .iter()
                    .map(move |o| strsim::osa_distance(p, o) as u64)
            })
            .sum()
    });
    time("triple_accel::rdamerau_exp (bytes)", pairs, || {
        probes
            .iter()
            .flat_map(|p| {
                others.iter().map(move |o| {
                    triple_accel::levenshtein::rdamerau_exp(p.as_bytes(), o.as_bytes()) as u64
                })
            })
            .sum()
    });
    time("rapidfuzz osa::distance", pairs, || {
        probes
            .iter()
            .flat_map(|p| {
                others
                    .iter()
                    .map(move |o| osa::distance(p.chars(), o.chars()) as u64)
            })
            .sum()
    });
    time("rapidfuzz BatchComparator, cutoff 2", pairs, || {
        let args = osa::Args::default().score_cutoff(2);
        probes
            .iter()
            .map(|p| {
                let c = osa::BatchComparator::new(p.chars());
                other_chars
                    .iter()
                    .map(|o| c.distance_with_args(o.iter().copied(), &args).unwrap_or(3) as u64)
                    .sum::<u64>()
            })
            .sum()
    });

    println!("\nJaro-Winkler");
    time("strsim::jaro_winkler", pairs, || {
        probes
            .iter()
            .flat_map(|p| {
                others
                    .iter()
                    .map(move |o| (strsim::jaro_winkler(p, o) * 1000.0) as u64)
            })
            .sum()
    });
    time("rapidfuzz jaro_winkler::similarity", pairs, || {
        probes
            .iter()
            .flat_map(|p| {
                others
                    .iter()
                    .map(move |o| (jaro_winkler::similarity(p.chars(), o.chars()) * 1000.0) as u64)
            })
            .sum()
    });
    time("rapidfuzz BatchComparator, cutoff 0.9", pairs, || {
        let args = jaro_winkler::Args::default().score_cutoff(0.9);
        probes
            .iter()
            .map(|p| {
                let c = jaro_winkler::BatchComparator::new(p.chars());
                other_chars
                    .iter()
                    .map(|o| {
                        (c.similarity_with_args(o.iter().copied(), &args)
                            .unwrap_or(0.0)
                            * 1000.0) as u64
                    })
                    .sum::<u64>()
            })
            .sum()
    });
    black_box(());
}
