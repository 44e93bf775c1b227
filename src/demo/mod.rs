//! Demo data: listings from Furrowfield Exchange.
//!
//! Furrowfield Exchange is an invented marketplace for used farm and
//! construction equipment. Every listing, spelling and part number here is
//! made up by a seeded generator; no real maker, dealer or person appears.
//! Sellers describe a machine's transmission and engine in free text and type
//! part numbers by hand, so one gearbox or engine is written many ways.
//!
//! [`write_sample`] writes `listings.csv` (`listing_id, transmission, engine,
//! part_no, price_usd`) and, under `truth/`, one file per free-text column
//! that lists every distinct raw value once with the features it really
//! describes. A feature the text does not state is empty in the truth (an
//! engine written "6 cyl diesel" has no known displacement), flags not stated
//! are `false`, and placeholders and blanks have every feature empty and
//! `placeholder = true`.
//!
//! Generation is row by row ([`Listings`] is an iterator), so
//! [`write_listings`] streams any number of rows; only the truth (one entry
//! per distinct value) is held in memory. Same [`SampleOptions`], same bytes:
//! the generator draws from ChaCha8 and uses no platform-dependent arithmetic.
//!
//! # Mess, and how often
//!
//! Per value of each free-text column:
//!
//! | what | rate |
//! | --- | --- |
//! | null (empty unquoted field) | 2% |
//! | blank (spaces, or a lone no-break space) | 1% |
//! | placeholder (`n/a`, `N/A`, `-`, `--`, `?`, `unknown`, `tbd`, ...) | 1.5% |
//! | casing of transmission and engine text: as written / lower / UPPER / Title | 74 / 10 / 10 / 6% |
//! | a space doubled | 3% |
//! | a no-break space (U+00A0) in place of a space | 0.5% (part numbers 0.3%) |
//! | full-width digits (U+FF10..U+FF19) | 0.3% (part numbers 0.2%) |
//! | leading / trailing space | 2% / 4% |
//! | typo: 1% of distinct clean spellings are misspelt (two letters swapped or one dropped) in half their rows | ~0.5% |
//!
//! Spelling habits (abbreviations, `4-cyl` / `4 cyl` / `4cyl` / `4 cyl.`,
//! units glued to numbers, word order, separators) are drawn with a strong
//! lean towards the first spellings of each list, so a few spellings are
//! common and the rest make a long tail. Engines, gearboxes and parts come
//! from weighted catalogues. 40% of transmission and engine values repeat
//! word for word one of a small stock of descriptions (60 and 120, drawn once
//! per seed, the first far more often than the last), as copied dealer ads
//! do; a quarter of part numbers are popular stock parts.
//!
//! Part numbers are `FAM-SIZE-GRADE[-Rn]` (e.g. `FLT-1204-A`, `PMP-0750-3T-R2`)
//! written canonically 58% of the time, otherwise spaced, without
//! separators, half-spaced, with the grade glued on, or behind a `P/N` label;
//! 20% are lower-cased.
//!
//! # A bounded vocabulary
//!
//! By default the number of distinct transmission and engine spellings grows
//! with the rows (about 121,000 and 375,000 at a million rows), as free text
//! typed by many sellers does. With [`SampleOptions::spellings`] set to
//! `Some(n)`, each of the two descriptor columns instead draws `n` spellings
//! once per seed (each a fresh description, smudged as usual; a spelling
//! drawn twice counts once, so a column may end up with slightly fewer) and
//! every non-gap row takes one of them, leaning to the first
//! (the `k`-th of `n` is taken by about `1 / (2 sqrt(k n))` of rows). Gaps
//! (nulls, blanks, placeholders) come at the usual rates, so the column has
//! at most `n` spellings plus the 13 gap spellings. The truth stays exact: each
//! spelling keeps the features it was drawn with. Part numbers are not
//! affected and stay a high-cardinality code column. The default (`None`)
//! gives exactly the same bytes as before the option existed.
//!
//! # A drop that drifted
//!
//! With [`SampleOptions::drift`], the listings are those of the same options
//! without it, row for row, except in the engine column of two kinds of rows
//! (chosen by a second seeded stream, so every other draw is unchanged):
//!
//! - a new spelling family: 5% of the rows whose engine is a diesel model
//!   describe it as sellers of the baseline never did, `4-banger heavy oil`,
//!   `heavy oil 6-banger 6.8L` (`banger` for cylinders, `heavy oil` for
//!   diesel; a displacement in half of them);
//! - a shifted family: 15% of the other rows that state a fuel other than
//!   gasoline take instead the text of an earlier row that states gasoline.
//!
//! So a check of this drop against a baseline of the drop without drift finds
//! exactly the new family's values as new values, and the gasoline share of
//! the fuel label moved (a population stability index of about 0.12, a
//! moderate shift, on the committed sample's options). The truth files
//! describe the drifted drop.
//!
//! # Extended variants
//!
//! With [`Variants::Extended`], 30% of values take one spelling that the
//! standard sample never contains: number words (`six-speed`), `(6)`,
//! `6 gears`, `cyl x4`, `straight-6`, `4.5 ltr`, `4 1/2 L`, `1,800 cc`,
//! `120 hp / 89 kW`, `PS`, `non-turbo`, `unleaded`, `bottled gas`, part numbers
//! with dots, underscores or slashes, sizes without leading zeros, `rev 2`, and
//! so on. Rules written against the standard sample can be scored on these.

use std::borrow::Cow;
use std::collections::{BTreeMap, HashMap};
use std::fs::{self, File};
use std::io::{self, BufWriter, Write};
use std::path::Path;

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

// ---------------------------------------------------------------------------
// Options and results
// ---------------------------------------------------------------------------

/// Which spellings the generator draws from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Variants {
    /// The spellings of the committed sample.
    Standard,
    /// The standard spellings plus formats the standard sample never has.
    Extended,
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SampleOptions {
    pub rows: usize,
    pub seed: u64,
    pub variants: Variants,
    /// At most this many distinct spellings in each of `transmission` and
    /// `engine` (gaps aside), drawn once per seed; `None` (or `Some(0)`):
    /// unbounded, growing with the rows. See "A bounded vocabulary" in the
    /// module documentation.
    pub spellings: Option<usize>,
    /// The second drop of the drift scenario: see "A drop that drifted" in
    /// the module documentation.
    pub drift: bool,
}

impl Default for SampleOptions {
    /// The committed sample: 4000 rows, seed 7, standard spellings, unbounded.
    fn default() -> Self {
        SampleOptions {
            rows: 4000,
            seed: 7,
            variants: Variants::Standard,
            spellings: None,
            drift: false,
        }
    }
}

/// One listing as the seller typed it. `None` is a null (nothing entered).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Listing {
    pub listing_id: String,
    pub transmission: Option<String>,
    pub engine: Option<String>,
    pub part_no: Option<String>,
    pub price_usd: u32,
}

/// A distinct raw value's true features and how many rows carry it.
/// `features` is `None` for placeholders and blanks.
#[derive(Debug, Clone, PartialEq)]
pub struct Entry<F> {
    pub features: Option<F>,
    pub rows: u64,
}

/// Every distinct raw value of a column, sorted by value (byte order).
pub type TruthColumn<F> = BTreeMap<String, Entry<F>>;

/// The true features of every distinct value of each free-text column.
#[derive(Debug, Clone, Default)]
pub struct Truth {
    pub transmission: TruthColumn<GearboxFeatures>,
    pub engine: TruthColumn<EngineFeatures>,
    pub part_no: TruthColumn<PartFeatures>,
    /// Times one raw string was generated with two different truths (the
    /// first is kept). Always 0 unless the generator has a bug.
    pub conflicts: u64,
}

/// Listings held in memory with their truth.
#[derive(Debug, Clone)]
pub struct Sample {
    pub listings: Vec<Listing>,
    pub truth: Truth,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum GearboxKind {
    Manual,
    Powershift,
    Hydrostatic,
    Cvt,
    Automatic,
}

impl GearboxKind {
    pub fn label(self) -> &'static str {
        match self {
            GearboxKind::Manual => "manual",
            GearboxKind::Powershift => "powershift",
            GearboxKind::Hydrostatic => "hydrostatic",
            GearboxKind::Cvt => "cvt",
            GearboxKind::Automatic => "automatic",
        }
    }

    fn is_stepless(self) -> bool {
        matches!(self, GearboxKind::Hydrostatic | GearboxKind::Cvt)
    }
}

/// What a transmission value says.
#[derive(Debug, Clone, PartialEq)]
pub struct GearboxFeatures {
    /// Forward gears; `None` for stepless drives or when not stated.
    pub gears: Option<u32>,
    pub kind: GearboxKind,
    /// A shuttle or reverser is named.
    pub shuttle: bool,
    /// Creeper (crawler) gears are named.
    pub creeper: bool,
    /// Top road speed, converted to km/h, when stated.
    pub max_speed_kmh: Option<f64>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Fuel {
    Diesel,
    Gasoline,
    Lpg,
    Electric,
}

impl Fuel {
    pub fn label(self) -> &'static str {
        match self {
            Fuel::Diesel => "diesel",
            Fuel::Gasoline => "gasoline",
            Fuel::Lpg => "lpg",
            Fuel::Electric => "electric",
        }
    }
}

/// What an engine value says.
#[derive(Debug, Clone, PartialEq)]
pub struct EngineFeatures {
    pub cylinders: Option<u32>,
    pub displacement_l: Option<f64>,
    pub power_hp: Option<f64>,
    /// A turbocharger is named.
    pub turbo: bool,
    pub fuel: Option<Fuel>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum PartFamily {
    Pump,
    Filter,
    Valve,
    Bearing,
    Hose,
    Seal,
}

impl PartFamily {
    pub fn label(self) -> &'static str {
        match self {
            PartFamily::Pump => "pump",
            PartFamily::Filter => "filter",
            PartFamily::Valve => "valve",
            PartFamily::Bearing => "bearing",
            PartFamily::Hose => "hose",
            PartFamily::Seal => "seal",
        }
    }

    /// The three letters a part number starts with.
    pub fn prefix(self) -> &'static str {
        match self {
            PartFamily::Pump => "PMP",
            PartFamily::Filter => "FLT",
            PartFamily::Valve => "VLV",
            PartFamily::Bearing => "BRG",
            PartFamily::Hose => "HOS",
            PartFamily::Seal => "SEA",
        }
    }
}

/// What a part number says.
#[derive(Debug, Clone, PartialEq)]
pub struct PartFeatures {
    pub family: PartFamily,
    /// The middle digits, e.g. 750 for `PMP-0750-3T`.
    pub size: u32,
    /// The revision, e.g. 2 for `...-R2`.
    pub rev: Option<u32>,
}

// ---------------------------------------------------------------------------
// Entry points
// ---------------------------------------------------------------------------

/// Write `listings.csv` and `truth/{transmission,engine,part_no}.csv` into
/// `out_dir` (created if missing). Memory grows with distinct values only.
pub fn write_sample(out_dir: &Path, opts: &SampleOptions) -> io::Result<()> {
    fs::create_dir_all(out_dir.join("truth"))?;
    let listings = File::create(out_dir.join("listings.csv"))?;
    let truth = write_listings(BufWriter::with_capacity(1 << 20, listings), opts)?;
    write_truth(&out_dir.join("truth"), &truth)
}

/// Generate all listings in memory, with their truth.
pub fn generate(opts: &SampleOptions) -> Sample {
    let mut rows = Listings::new(opts);
    let listings = rows.by_ref().collect();
    Sample {
        listings,
        truth: rows.into_truth(),
    }
}

/// Stream the listings table as CSV into `out`, one row at a time, and hand
/// back the truth gathered on the way.
pub fn write_listings<W: Write>(mut out: W, opts: &SampleOptions) -> io::Result<Truth> {
    out.write_all(b"listing_id,transmission,engine,part_no,price_usd\n")?;
    let mut rows = Listings::new(opts);
    for listing in rows.by_ref() {
        write_listing(&mut out, &listing)?;
    }
    out.flush()?;
    Ok(rows.into_truth())
}

/// Write the three truth files into `dir` (which must exist).
pub fn write_truth(dir: &Path, truth: &Truth) -> io::Result<()> {
    write_truth_column(&dir.join("transmission.csv"), &truth.transmission)?;
    write_truth_column(&dir.join("engine.csv"), &truth.engine)?;
    write_truth_column(&dir.join("part_no.csv"), &truth.part_no)
}

/// The listings, generated one by one; the truth grows as they are drawn.
pub struct Listings {
    dice: Dice,
    opts: SampleOptions,
    row: usize,
    stock: Stock,
    pool: Option<Pool>,
    tally: Tally,
    drift: Option<Drifter>,
}

/// The truth while rows are drawn: hashed for speed, sorted at the end.
#[derive(Default)]
struct Tally {
    transmission: HashMap<String, Entry<GearboxFeatures>>,
    engine: HashMap<String, Entry<EngineFeatures>>,
    part_no: HashMap<String, Entry<PartFeatures>>,
    conflicts: u64,
}

impl Tally {
    fn into_truth(self) -> Truth {
        Truth {
            transmission: self.transmission.into_iter().collect(),
            engine: self.engine.into_iter().collect(),
            part_no: self.part_no.into_iter().collect(),
            conflicts: self.conflicts,
        }
    }
}

/// Descriptions that many listings repeat word for word (dealer templates,
/// copied ads) and popular parts: the head of each column's frequencies.
struct Stock {
    gearboxes: Vec<(Gearbox, String, GearboxFeatures)>,
    engines: Vec<(EngineSpec, String, EngineFeatures)>,
    parts: Vec<PartCode>,
}

const STOCK_GEARBOXES: usize = 60;
const STOCK_ENGINES: usize = 120;
const STOCK_DESCRIPTION_SHARE: f64 = 0.4;

impl Stock {
    fn lay_in(d: &mut Dice, opts: &SampleOptions) -> Stock {
        let extended = opts.variants == Variants::Extended;
        let gearboxes = (0..STOCK_GEARBOXES)
            .map(|_| {
                let g = fit_gearbox(d);
                let (clean, features) = describe_gearbox(d, &g, extended);
                (g, smudge(d, clean, opts.seed), features)
            })
            .collect();
        let engines = (0..STOCK_ENGINES)
            .map(|_| {
                let e = fit_engine(d);
                let (clean, features) = describe_engine(d, &e, extended);
                (e, smudge(d, clean, opts.seed), features)
            })
            .collect();
        let parts = (0..STOCK_PARTS).map(|_| make_part(d)).collect();
        Stock {
            gearboxes,
            engines,
            parts,
        }
    }
}

/// The fixed spellings of a bounded vocabulary ([`SampleOptions::spellings`]).
struct Pool {
    gearboxes: Vec<(Gearbox, String, GearboxFeatures)>,
    engines: Vec<(EngineSpec, String, EngineFeatures)>,
}

/// Draws allowed per wanted spelling before a pool settles for fewer.
const POOL_DRAWS_PER_SPELLING: usize = 20;

impl Pool {
    fn draw(d: &mut Dice, opts: &SampleOptions, n: usize) -> Pool {
        let extended = opts.variants == Variants::Extended;
        let gearboxes = distinct_draws(d, n, |d| {
            let g = fit_gearbox(d);
            let (clean, features) = describe_gearbox(d, &g, extended);
            (g, smudge(d, clean, opts.seed), features)
        });
        let engines = distinct_draws(d, n, |d| {
            let e = fit_engine(d);
            let (clean, features) = describe_engine(d, &e, extended);
            (e, smudge(d, clean, opts.seed), features)
        });
        Pool { gearboxes, engines }
    }
}

/// Up to `n` draws with distinct texts (the first draw of a text is kept).
fn distinct_draws<T, F>(
    d: &mut Dice,
    n: usize,
    mut draw: impl FnMut(&mut Dice) -> (T, String, F),
) -> Vec<(T, String, F)> {
    let mut seen = std::collections::HashSet::new();
    let mut out = Vec::with_capacity(n);
    for _ in 0..n.saturating_mul(POOL_DRAWS_PER_SPELLING) {
        if out.len() == n {
            break;
        }
        let item = draw(d);
        if seen.insert(item.1.clone()) {
            out.push(item);
        }
    }
    out
}

/// One of a pool's spellings, leaning to the first: index `floor(u^2 n)`.
fn from_pool<'a, T>(d: &mut Dice, pool: &'a [T]) -> Option<&'a T> {
    if pool.is_empty() {
        return None;
    }
    let u = d.fraction();
    Some(&pool[((u * u * pool.len() as f64) as usize).min(pool.len() - 1)])
}

/// A stock item (leaning to the first, more gently than spellings do) in
/// `share` of draws, else none.
fn from_stock<'a, T>(d: &mut Dice, stock: &'a [T], share: f64) -> Option<&'a T> {
    d.chance(share).then(|| {
        let u = d.fraction();
        &stock[((u * u * stock.len() as f64) as usize).min(stock.len() - 1)]
    })
}

impl Listings {
    pub fn new(opts: &SampleOptions) -> Self {
        let mut dice = Dice::new(opts.seed);
        let stock = Stock::lay_in(&mut dice, opts);
        let pool = opts
            .spellings
            .filter(|&n| n > 0)
            .map(|n| Pool::draw(&mut dice, opts, n));
        Listings {
            dice,
            opts: opts.clone(),
            row: 0,
            stock,
            pool,
            tally: Tally::default(),
            drift: opts.drift.then(|| Drifter {
                dice: Dice::new(opts.seed ^ DRIFT_SEED),
                gasoline: Vec::new(),
            }),
        }
    }

    /// Times a raw string was drawn with two different truths so far
    /// (always 0 unless the generator has a bug).
    pub fn conflicts(&self) -> u64 {
        self.tally.conflicts
    }

    /// The truth of the rows drawn so far, sorted by value.
    pub fn into_truth(self) -> Truth {
        self.tally.into_truth()
    }

    fn list_one(&mut self) -> Listing {
        let extended = self.opts.variants == Variants::Extended;
        let seed = self.opts.seed;
        let d = &mut self.dice;
        let t = &mut self.tally;
        // With a bounded vocabulary every description comes from the pool.
        let stock_gearbox = match &self.pool {
            Some(pool) => from_pool(d, &pool.gearboxes),
            None => from_stock(d, &self.stock.gearboxes, STOCK_DESCRIPTION_SHARE),
        };
        let gearbox = stock_gearbox.map_or_else(|| fit_gearbox(d), |s| s.0.clone());
        let stock_engine = match &self.pool {
            Some(pool) => from_pool(d, &pool.engines),
            None => from_stock(d, &self.stock.engines, STOCK_DESCRIPTION_SHARE),
        };
        let engine = stock_engine.map_or_else(|| fit_engine(d), |s| s.0.clone());
        let part = from_stock(d, &self.stock.parts, STOCK_PART_SHARE)
            .cloned()
            .unwrap_or_else(|| make_part(d));
        let transmission = fill(
            d,
            &mut t.transmission,
            &mut t.conflicts,
            |d| match stock_gearbox {
                Some((_, text, features)) => (text.clone(), features.clone()),
                None => {
                    let (clean, features) = describe_gearbox(d, &gearbox, extended);
                    (smudge(d, clean, seed), features)
                }
            },
        );
        let engine_text = fill(d, &mut t.engine, &mut t.conflicts, |d| match stock_engine {
            Some((_, text, features)) => (text.clone(), features.clone()),
            None => {
                let (clean, features) = describe_engine(d, &engine, extended);
                (smudge(d, clean, seed), features)
            }
        });
        let part_no = fill(d, &mut t.part_no, &mut t.conflicts, |d| {
            (write_part_number(d, &part, extended), part.features())
        });
        let engine_text = match &mut self.drift {
            Some(drifter) => drifter.redraw(engine_text, &engine, t),
            None => engine_text,
        };
        Listing {
            listing_id: format!("L{:07}", self.row),
            transmission,
            engine: engine_text,
            part_no,
            price_usd: asking_price(d, &gearbox, &engine),
        }
    }
}

impl Iterator for Listings {
    type Item = Listing;

    fn next(&mut self) -> Option<Listing> {
        if self.row >= self.opts.rows {
            return None;
        }
        self.row += 1;
        Some(self.list_one())
    }

    fn size_hint(&self) -> (usize, Option<usize>) {
        let left = self.opts.rows - self.row;
        (left, Some(left))
    }
}

// ---------------------------------------------------------------------------
// The drifted drop
// ---------------------------------------------------------------------------

/// Mixed into the seed of the drift's own stream of draws.
const DRIFT_SEED: u64 = 0x0064_7269_6674;
/// Of the rows with a diesel engine described: the share rewritten in the
/// new spelling family.
const DRIFT_NEW_FAMILY_SHARE: f64 = 0.05;
/// Of the rows stating a fuel other than gasoline: the share that takes the
/// text of an earlier gasoline row.
const DRIFT_SHIFT_SHARE: f64 = 0.15;
const HEAVY_OIL_SPELLINGS: &[&str] = &[
    "{n}-banger heavy oil",
    "{n} banger heavy-oil",
    "heavy oil {n}-banger",
];

/// Rewrites engine values after the row was drawn, with its own dice, so
/// that the rest of the drop stays the baseline's row for row.
struct Drifter {
    dice: Dice,
    /// Engine values stating gasoline in unchanged rows so far (one entry
    /// per row, so a copy follows their frequencies).
    gasoline: Vec<String>,
}

impl Drifter {
    fn redraw(
        &mut self,
        text: Option<String>,
        engine: &EngineSpec,
        t: &mut Tally,
    ) -> Option<String> {
        let text = text?;
        // Gaps (blanks, placeholders) have no features and stay.
        let Some(fuel) = t
            .engine
            .get(&text)
            .and_then(|e| e.features.as_ref())
            .map(|f| f.fuel)
        else {
            return Some(text);
        };
        let x = self.dice.fraction();
        if engine.model.fuel == Fuel::Diesel && x < DRIFT_NEW_FAMILY_SHARE {
            let (new, features) = heavy_oil(&mut self.dice, engine.model);
            swap(t, &text, new.clone(), Some(features));
            return Some(new);
        }
        let shifted = matches!(fuel, Some(f) if f != Fuel::Gasoline);
        if shifted && !self.gasoline.is_empty() && self.dice.chance(DRIFT_SHIFT_SHARE) {
            let copy = self.gasoline[self.dice.below(self.gasoline.len())].clone();
            let features = t.engine.get(&copy).and_then(|e| e.features.clone());
            swap(t, &text, copy.clone(), features);
            return Some(copy);
        }
        if fuel == Some(Fuel::Gasoline) {
            self.gasoline.push(text.clone());
        }
        Some(text)
    }
}

/// An engine in the new spelling family: `4-banger heavy oil`, with a
/// displacement half of the time.
fn heavy_oil(d: &mut Dice, m: &EngineModel) -> (String, EngineFeatures) {
    let mut text = spell(d.one_of(HEAVY_OIL_SPELLINGS), m.cylinders);
    let mut displacement_l = None;
    if d.chance(0.5) {
        let (phrase, litres) = displacement_phrase(d, m.tenths, false);
        text = format!("{text} {phrase}");
        displacement_l = Some(litres);
    }
    let features = EngineFeatures {
        cylinders: Some(m.cylinders),
        displacement_l,
        power_hp: None,
        turbo: false,
        fuel: Some(Fuel::Diesel),
    };
    (text, features)
}

/// Move one row of the engine truth from `old` to `new`.
fn swap(t: &mut Tally, old: &str, new: String, features: Option<EngineFeatures>) {
    if let Some(entry) = t.engine.get_mut(old) {
        entry.rows -= 1;
        if entry.rows == 0 {
            t.engine.remove(old);
        }
    }
    enter(&mut t.engine, &mut t.conflicts, new, features);
}

// ---------------------------------------------------------------------------
// Dice: every random draw goes through here
// ---------------------------------------------------------------------------

/// Seeded draws that give the same results on every platform: integer ranges
/// are drawn as `u64`/`u32`, fractions from 53 random bits.
struct Dice(ChaCha8Rng);

impl Dice {
    fn new(seed: u64) -> Self {
        Dice(ChaCha8Rng::seed_from_u64(seed))
    }

    fn below(&mut self, n: usize) -> usize {
        self.0.gen_range(0..n as u64) as usize
    }

    fn chance(&mut self, p: f64) -> bool {
        self.0.gen::<f64>() < p
    }

    fn fraction(&mut self) -> f64 {
        self.0.gen::<f64>()
    }

    /// An index that leans hard towards the front of a list: the first
    /// spellings are most sellers' habit, the last a few sellers'.
    fn habitual(&mut self, n: usize) -> usize {
        let u = self.fraction();
        ((u * u * u * n as f64) as usize).min(n - 1)
    }

    fn weighted(&mut self, weights: &[u32]) -> usize {
        let total: u32 = weights.iter().sum();
        let mut x = self.0.gen_range(0..total);
        for (i, &w) in weights.iter().enumerate() {
            if x < w {
                return i;
            }
            x -= w;
        }
        weights.len() - 1
    }

    fn one_of<'a>(&mut self, spellings: &[&'a str]) -> &'a str {
        spellings[self.habitual(spellings.len())]
    }
}

/// The ways one thing is written: the usual spellings, which the bundled
/// rulesets know, and odd ones, which they are not meant to know.
struct Spellings {
    usual: &'static [&'static str],
    odd: &'static [&'static str],
}

impl Spellings {
    fn new(usual: &'static [&'static str], odd: &'static [&'static str]) -> Spellings {
        Spellings { usual, odd }
    }

    fn pick(&self, d: &mut Dice, odd: bool) -> &'static str {
        d.one_of(if odd { self.odd } else { self.usual })
    }
}

/// Put a number into a spelling template: `{n}` (and `{r}`).
fn spell(template: &str, n: impl std::fmt::Display) -> String {
    template.replace("{n}", &n.to_string())
}

fn spell_pair(template: &str, n: u32, r: u32) -> String {
    spell(template, n).replace("{r}", &r.to_string())
}

fn number_word(n: u32) -> Option<String> {
    const ONES: [&str; 20] = [
        "zero",
        "one",
        "two",
        "three",
        "four",
        "five",
        "six",
        "seven",
        "eight",
        "nine",
        "ten",
        "eleven",
        "twelve",
        "thirteen",
        "fourteen",
        "fifteen",
        "sixteen",
        "seventeen",
        "eighteen",
        "nineteen",
    ];
    const TENS: [&str; 5] = ["", "", "twenty", "thirty", "forty"];
    match n {
        0..=19 => Some(ONES[n as usize].to_owned()),
        20 | 30 | 40 => Some(TENS[n as usize / 10].to_owned()),
        21..=49 => Some(format!(
            "{}-{}",
            TENS[n as usize / 10],
            ONES[n as usize % 10]
        )),
        _ => None,
    }
}

// ---------------------------------------------------------------------------
// Gaps: nulls, blanks, placeholders
// ---------------------------------------------------------------------------

const NULL_RATE: f64 = 0.02;
const BLANK_RATE: f64 = 0.01;
const PLACEHOLDER_RATE: f64 = 0.015;

const BLANKS: &[&str] = &[" ", "  ", "\u{a0}", "   "];
const PLACEHOLDERS: &[&str] = &[
    "n/a", "-", "N/A", "?", "unknown", "--", "tbd", "Unknown", "TBD",
];

enum Gap {
    Null,
    Blank,
    Placeholder,
}

fn draw_gap(d: &mut Dice) -> Option<Gap> {
    let x = d.fraction();
    if x < NULL_RATE {
        Some(Gap::Null)
    } else if x < NULL_RATE + BLANK_RATE {
        Some(Gap::Blank)
    } else if x < NULL_RATE + BLANK_RATE + PLACEHOLDER_RATE {
        Some(Gap::Placeholder)
    } else {
        None
    }
}

/// One cell of a free-text column: a gap, or what `write` produces; either
/// way the raw value is entered in the column's vocabulary.
fn fill<F: PartialEq>(
    d: &mut Dice,
    vocabulary: &mut HashMap<String, Entry<F>>,
    conflicts: &mut u64,
    write: impl FnOnce(&mut Dice) -> (String, F),
) -> Option<String> {
    let (raw, features) = match draw_gap(d) {
        Some(Gap::Null) => return None,
        Some(Gap::Blank) => (d.one_of(BLANKS).to_owned(), None),
        Some(Gap::Placeholder) => (d.one_of(PLACEHOLDERS).to_owned(), None),
        None => {
            let (raw, features) = write(d);
            (raw, Some(features))
        }
    };
    enter(vocabulary, conflicts, raw.clone(), features);
    Some(raw)
}

fn enter<F: PartialEq>(
    vocabulary: &mut HashMap<String, Entry<F>>,
    conflicts: &mut u64,
    raw: String,
    features: Option<F>,
) {
    match vocabulary.get_mut(&raw) {
        Some(entry) => {
            entry.rows += 1;
            if entry.features != features {
                *conflicts += 1;
            }
        }
        None => {
            vocabulary.insert(raw, Entry { features, rows: 1 });
        }
    }
}

// ---------------------------------------------------------------------------
// Smudging free text: typos, casing, spacing
// ---------------------------------------------------------------------------

const DOUBLED_SPACE_RATE: f64 = 0.03;
const NO_BREAK_SPACE_RATE: f64 = 0.005;
const FULL_WIDTH_RATE: f64 = 0.003;
const LEADING_SPACE_RATE: f64 = 0.02;
const TRAILING_SPACE_RATE: f64 = 0.04;
/// One clean spelling in this many is misspelt by habit...
const MISSPELT_ONE_IN: u64 = 100;
/// ...in this share of its rows.
const MISSPELT_ROW_RATE: f64 = 0.5;
/// Share of values given an extended-only spelling with `Variants::Extended`.
const EXTENDED_RATE: f64 = 0.3;

/// A clean description as a seller would type it: sometimes misspelt, cased
/// to taste, spaced carelessly.
fn smudge(d: &mut Dice, clean: String, seed: u64) -> String {
    let typed = if spelling_hash(&clean, seed) % MISSPELT_ONE_IN == 0 && d.chance(MISSPELT_ROW_RATE)
    {
        misspell(&clean, seed).unwrap_or(clean)
    } else {
        clean
    };
    let cased = recase(d, &typed);
    jostle_spacing(d, cased)
}

/// FNV-1a over the seed and the spelling: a fixed, portable hash.
fn spelling_hash(s: &str, seed: u64) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in seed.to_le_bytes().iter().chain(s.as_bytes()) {
        h ^= u64::from(*b);
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

/// The one typo a spelling habitually gets: in a word of four letters or
/// more, two neighbouring letters swapped or one dropped.
fn misspell(s: &str, seed: u64) -> Option<String> {
    let h = spelling_hash(s, !seed);
    let words = letter_runs(s, 4);
    let (start, len) = *words.get((h % words.len().max(1) as u64) as usize)?;
    let b = s.as_bytes();
    let spots: Vec<usize> = (start..start + len - 1)
        .filter(|&i| !b[i].eq_ignore_ascii_case(&b[i + 1]))
        .collect();
    let i = *spots.get(((h >> 16) % spots.len().max(1) as u64) as usize)?;
    let mut typed = b.to_vec();
    if (h >> 40) & 1 == 0 {
        typed.swap(i, i + 1);
    } else {
        typed.remove(i + 1);
    }
    String::from_utf8(typed).ok()
}

/// (start, length) of every run of ASCII letters at least `min` long.
fn letter_runs(s: &str, min: usize) -> Vec<(usize, usize)> {
    let mut runs = Vec::new();
    let mut start = None;
    for (i, c) in s.bytes().chain(std::iter::once(b' ')).enumerate() {
        match (c.is_ascii_alphabetic(), start) {
            (true, None) => start = Some(i),
            (false, Some(st)) => {
                if i - st >= min {
                    runs.push((st, i - st));
                }
                start = None;
            }
            _ => {}
        }
    }
    runs
}

fn recase(d: &mut Dice, s: &str) -> String {
    match d.weighted(&[74, 10, 10, 6]) {
        0 => s.to_owned(),
        1 => s.to_lowercase(),
        2 => s.to_uppercase(),
        _ => title_case(s),
    }
}

/// Upper-case each letter that follows neither a letter nor a digit.
fn title_case(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    let mut after_word = false;
    for c in s.chars() {
        if c.is_alphabetic() && !after_word {
            out.extend(c.to_uppercase());
        } else {
            out.extend(c.to_lowercase());
        }
        after_word = c.is_alphanumeric();
    }
    out
}

fn jostle_spacing(d: &mut Dice, mut s: String) -> String {
    if d.chance(DOUBLED_SPACE_RATE) {
        s = replace_a_space(d, &s, "  ");
    }
    if d.chance(NO_BREAK_SPACE_RATE) {
        s = replace_a_space(d, &s, "\u{a0}");
    }
    if d.chance(FULL_WIDTH_RATE) {
        s = full_width_digits(&s);
    }
    pad(d, s, LEADING_SPACE_RATE, TRAILING_SPACE_RATE)
}

fn pad(d: &mut Dice, mut s: String, leading: f64, trailing: f64) -> String {
    if d.chance(leading) {
        s.insert(0, ' ');
    }
    if d.chance(trailing) {
        s.push(' ');
    }
    s
}

/// Replace one of the spaces (chosen at random) with `with`.
fn replace_a_space(d: &mut Dice, s: &str, with: &str) -> String {
    let spaces: Vec<usize> = s.match_indices(' ').map(|(i, _)| i).collect();
    if spaces.is_empty() {
        return s.to_owned();
    }
    let at = spaces[d.below(spaces.len())];
    format!("{}{}{}", &s[..at], with, &s[at + 1..])
}

fn full_width_digits(s: &str) -> String {
    s.chars()
        .map(|c| match c.to_digit(10) {
            Some(v) if c.is_ascii_digit() => char::from_u32(0xFF10 + v).unwrap_or(c),
            _ => c,
        })
        .collect()
}

// ---------------------------------------------------------------------------
// Transmissions
// ---------------------------------------------------------------------------

/// A gearbox as fitted to the machine for sale.
#[derive(Debug, Clone)]
struct Gearbox {
    kind: GearboxKind,
    forward: u32,
    reverse: u32,
    shuttle: bool,
    creeper: bool,
    top_speed: Option<TopSpeed>,
}

#[derive(Debug, Clone, Copy)]
enum TopSpeed {
    Kmh(u32),
    Mph(u32),
}

/// 1 mile = 1609.344 m exactly (international mile).
const KMH_PER_MPH: f64 = 1.609_344;

impl TopSpeed {
    fn kmh(self) -> f64 {
        match self {
            TopSpeed::Kmh(v) => f64::from(v),
            TopSpeed::Mph(v) => f64::from(v) * KMH_PER_MPH,
        }
    }
}

const KINDS: [GearboxKind; 5] = [
    GearboxKind::Manual,
    GearboxKind::Powershift,
    GearboxKind::Hydrostatic,
    GearboxKind::Cvt,
    GearboxKind::Automatic,
];
const KIND_WEIGHTS: [u32; 5] = [36, 24, 18, 9, 13];

/// (forward, reverse, weight)
const MANUAL_LAYOUTS: &[(u32, u32, u32)] = &[
    (4, 1, 8),
    (5, 1, 10),
    (6, 2, 8),
    (8, 2, 14),
    (8, 8, 8),
    (9, 3, 6),
    (10, 2, 4),
    (12, 4, 6),
    (12, 12, 10),
    (16, 16, 5),
    (20, 20, 3),
    (24, 24, 2),
];
const POWERSHIFT_LAYOUTS: &[(u32, u32, u32)] = &[
    (3, 3, 4),
    (4, 4, 6),
    (8, 4, 3),
    (12, 4, 4),
    (16, 16, 10),
    (16, 4, 4),
    (18, 6, 6),
    (19, 6, 3),
    (20, 20, 4),
    (23, 11, 2),
    (24, 24, 5),
    (30, 15, 2),
    (32, 32, 3),
    (40, 40, 1),
];
const AUTOMATIC_LAYOUTS: &[(u32, u32, u32)] = &[(4, 1, 5), (5, 1, 6), (6, 1, 8), (8, 2, 3)];

fn fit_gearbox(d: &mut Dice) -> Gearbox {
    let kind = KINDS[d.weighted(&KIND_WEIGHTS)];
    let (forward, reverse) = match kind {
        GearboxKind::Manual => pick_layout(d, MANUAL_LAYOUTS),
        GearboxKind::Powershift => pick_layout(d, POWERSHIFT_LAYOUTS),
        GearboxKind::Automatic => pick_layout(d, AUTOMATIC_LAYOUTS),
        GearboxKind::Hydrostatic | GearboxKind::Cvt => (0, 0),
    };
    let shuttle = d.chance(match kind {
        GearboxKind::Manual if forward == reverse && forward >= 8 => 0.55,
        GearboxKind::Manual => 0.06,
        GearboxKind::Powershift => 0.3,
        GearboxKind::Cvt => 0.1,
        _ => 0.0,
    });
    let creeper = d.chance(match kind {
        GearboxKind::Manual => 0.08,
        GearboxKind::Powershift => 0.12,
        _ => 0.0,
    });
    let top_speed = d.chance(match kind {
        GearboxKind::Powershift | GearboxKind::Cvt => 0.15,
        GearboxKind::Manual => 0.04,
        _ => 0.0,
    });
    Gearbox {
        kind,
        forward,
        reverse,
        shuttle,
        creeper,
        top_speed: top_speed.then(|| road_speed(d)),
    }
}

fn pick_layout(d: &mut Dice, layouts: &[(u32, u32, u32)]) -> (u32, u32) {
    let weights: Vec<u32> = layouts.iter().map(|l| l.2).collect();
    let (f, r, _) = layouts[d.weighted(&weights)];
    (f, r)
}

fn road_speed(d: &mut Dice) -> TopSpeed {
    if d.chance(0.2) {
        TopSpeed::Mph([20, 25, 30][d.weighted(&[2, 5, 2])])
    } else {
        TopSpeed::Kmh([30, 40, 50, 60][d.weighted(&[2, 6, 4, 1])])
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum GearboxPart {
    Gears,
    Kind,
    Shuttle,
    Creeper,
}

/// The seller's description of a gearbox, and what it states.
fn describe_gearbox(d: &mut Dice, g: &Gearbox, extended: bool) -> (String, GearboxFeatures) {
    let gears_shown = !g.kind.is_stepless() && !d.chance(gear_count_omitted(g.kind));
    let kind_shown = !(gears_shown && g.kind == GearboxKind::Manual && d.chance(0.3));
    let odd = if extended && d.chance(EXTENDED_RATE) {
        odd_gearbox_part(d, g, gears_shown, kind_shown)
    } else {
        None
    };
    let phrases = [
        gears_shown.then(|| gear_phrase(d, g, odd == Some(GearboxPart::Gears))),
        kind_shown.then(|| kind_phrase(d, g.kind, odd == Some(GearboxPart::Kind))),
        g.shuttle
            .then(|| shuttle_phrase(d, g.kind, odd == Some(GearboxPart::Shuttle))),
        g.creeper
            .then(|| creeper_phrase(d, odd == Some(GearboxPart::Creeper))),
        g.top_speed.map(|s| speed_phrase(d, s)),
    ];
    let features = GearboxFeatures {
        gears: gears_shown.then_some(g.forward),
        kind: g.kind,
        shuttle: g.shuttle,
        creeper: g.creeper,
        max_speed_kmh: g.top_speed.map(TopSpeed::kmh),
    };
    (arrange_gearbox(d, phrases), features)
}

fn gear_count_omitted(kind: GearboxKind) -> f64 {
    match kind {
        GearboxKind::Manual => 0.08,
        GearboxKind::Powershift => 0.05,
        GearboxKind::Automatic => 0.15,
        GearboxKind::Hydrostatic | GearboxKind::Cvt => 1.0,
    }
}

fn odd_gearbox_part(
    d: &mut Dice,
    g: &Gearbox,
    gears_shown: bool,
    kind_shown: bool,
) -> Option<GearboxPart> {
    let candidates: Vec<GearboxPart> = [
        (
            gears_shown && number_word(g.forward).is_some(),
            GearboxPart::Gears,
        ),
        (kind_shown, GearboxPart::Kind),
        (g.shuttle, GearboxPart::Shuttle),
        (g.creeper, GearboxPart::Creeper),
    ]
    .into_iter()
    .filter_map(|(ok, part)| ok.then_some(part))
    .collect();
    (!candidates.is_empty()).then(|| candidates[d.below(candidates.len())])
}

const SPEED_COUNTS: &[&str] = &[
    "{n} spd",
    "{n}-speed",
    "{n} speed",
    "{n}spd",
    "{n}-spd",
    "{n}sp",
    "{n} sp",
    "{n} SPD",
    "{n}-Speed",
];
const FORWARD_REVERSE: &[&str] = &[
    "{n}x{r}",
    "{n}F/{r}R",
    "{n} x {r}",
    "{n} fwd {r} rev",
    "{n}/{r}",
    "{n}F x {r}R",
    "{n} fwd/{r} rev",
    "{n}F-{r}R",
    "{n} forward {r} reverse",
];
const ODD_GEAR_COUNTS: &[&str] = &[
    "{w}-speed",
    "{w} speed",
    "({n})",
    "{n} gears",
    "{n}-gear",
    "{n} ratios",
    "F{n}/R{r}",
];

fn gear_phrase(d: &mut Dice, g: &Gearbox, odd: bool) -> String {
    if odd {
        let word = number_word(g.forward).unwrap_or_default();
        return spell_pair(d.one_of(ODD_GEAR_COUNTS), g.forward, g.reverse).replace("{w}", &word);
    }
    let pairs = g.kind != GearboxKind::Automatic && d.chance(0.45);
    if pairs {
        spell_pair(d.one_of(FORWARD_REVERSE), g.forward, g.reverse)
    } else {
        spell(d.one_of(SPEED_COUNTS), g.forward)
    }
}

const MANUAL_WORDS: &[&str] = &[
    "manual",
    "Manual",
    "man.",
    "std",
    "standard",
    "mechanical",
    "synchro",
    "synchromesh",
    "collar shift",
    "MANUAL",
];
const POWERSHIFT_WORDS: &[&str] = &[
    "powershift",
    "Powershift",
    "power shift",
    "p/shift",
    "full powershift",
    "semi-powershift",
    "Power Shift",
    "pwr shift",
    "partial powershift",
    "power-shift",
];
const HYDROSTATIC_WORDS: &[&str] = &[
    "hydrostatic",
    "Hydrostatic",
    "hydro",
    "HST",
    "hydrostatic drive",
    "Hydro",
    "hydrostat",
    "hydro drive",
    "hydrostatic trans",
];
const CVT_WORDS: &[&str] = &[
    "CVT",
    "cvt",
    "infinitely variable (CVT)",
    "IVT",
    "stepless",
    "continuously variable",
    "CVT stepless",
];
const AUTOMATIC_WORDS: &[&str] = &[
    "automatic",
    "auto",
    "Automatic",
    "auto trans",
    "a/t",
    "full auto",
    "AUTO",
];
const TRANS_WORDS: &[&str] = &["trans", "transmission", "trans."];

const ODD_MANUAL_WORDS: &[&str] = &["stick", "mech.", "crash box", "constant mesh"];
const ODD_POWERSHIFT_WORDS: &[&str] = &["pwrshift", "p.shift", "full p/s"];
const ODD_HYDROSTATIC_WORDS: &[&str] = &["hydraulic drive", "H.S.T.", "3-range hydro"];
const ODD_CVT_WORDS: &[&str] = &["variable ratio", "c.v.t.", "power-split variable"];
const ODD_AUTOMATIC_WORDS: &[&str] = &["autom.", "self-shifting"];

fn kind_phrase(d: &mut Dice, kind: GearboxKind, odd: bool) -> String {
    let spellings = match kind {
        GearboxKind::Manual => Spellings::new(MANUAL_WORDS, ODD_MANUAL_WORDS),
        GearboxKind::Powershift => Spellings::new(POWERSHIFT_WORDS, ODD_POWERSHIFT_WORDS),
        GearboxKind::Hydrostatic => Spellings::new(HYDROSTATIC_WORDS, ODD_HYDROSTATIC_WORDS),
        GearboxKind::Cvt => Spellings::new(CVT_WORDS, ODD_CVT_WORDS),
        GearboxKind::Automatic => Spellings::new(AUTOMATIC_WORDS, ODD_AUTOMATIC_WORDS),
    };
    let word = spellings.pick(d, odd);
    if !odd && !word.contains("trans") && d.chance(0.05) {
        format!("{word} {}", d.one_of(TRANS_WORDS))
    } else {
        word.to_owned()
    }
}

const MANUAL_SHUTTLES: &[&str] = &[
    "shuttle",
    "power shuttle",
    "synchro shuttle",
    "w/ shuttle",
    "shuttle shift",
    "hydraulic shuttle",
    "power reverser",
    "pwr shuttle",
    "reverser",
    "powershuttle",
];
const POWER_SHUTTLES: &[&str] = &[
    "power shuttle",
    "w/ reverser",
    "power reverser",
    "shuttle",
    "pwr shuttle",
];
const ODD_SHUTTLES: &[&str] = &["F/R lever", "forward-reverse lever", "rev. lever"];

fn shuttle_phrase(d: &mut Dice, kind: GearboxKind, odd: bool) -> String {
    let words = match (kind, odd) {
        (_, true) => ODD_SHUTTLES,
        (GearboxKind::Manual, false) => MANUAL_SHUTTLES,
        _ => POWER_SHUTTLES,
    };
    d.one_of(words).to_owned()
}

const CREEPERS: &[&str] = &[
    "w/ creeper",
    "creeper",
    "w/creeper",
    "+ creeper",
    "with creeper",
    "creeper gears",
    "crawler gears",
    "& creeper",
];
const ODD_CREEPERS: &[&str] = &["ultra-low gears", "super-low range", "creep speed"];

fn creeper_phrase(d: &mut Dice, odd: bool) -> String {
    d.one_of(if odd { ODD_CREEPERS } else { CREEPERS })
        .to_owned()
}

const KMH_SPELLINGS: &[&str] = &["{n} km/h", "{n}km/h", "{n} kph", "{n}kph", "{n} kmh"];
const MPH_SPELLINGS: &[&str] = &["{n} mph", "{n}mph"];

fn speed_phrase(d: &mut Dice, speed: TopSpeed) -> String {
    match speed {
        TopSpeed::Kmh(v) => spell(d.one_of(KMH_SPELLINGS), v),
        TopSpeed::Mph(v) => spell(d.one_of(MPH_SPELLINGS), v),
    }
}

/// Word orders, as indices into [gears, kind, shuttle, creeper, speed].
const GEARBOX_ORDERS: [[usize; 5]; 4] = [
    [0, 1, 2, 3, 4],
    [1, 0, 2, 3, 4],
    [2, 0, 1, 3, 4],
    [0, 2, 1, 3, 4],
];
const SEPARATORS: &[&str] = &[" ", ", ", " - "];

fn arrange_gearbox(d: &mut Dice, phrases: [Option<String>; 5]) -> String {
    let mut order = GEARBOX_ORDERS[d.weighted(&[70, 15, 8, 7])];
    if phrases[0].as_deref().is_some_and(|g| g.starts_with('(')) {
        order = GEARBOX_ORDERS[1];
    }
    let sep = SEPARATORS[d.weighted(&[90, 7, 3])];
    let words: Vec<&str> = order
        .iter()
        .filter_map(|&i| phrases[i].as_deref())
        .collect();
    words.join(sep)
}

// ---------------------------------------------------------------------------
// Engines
// ---------------------------------------------------------------------------

/// An engine as catalogued: cylinders (0 for electric), displacement in
/// tenths of a litre, fuel, turbocharger, power ratings (hp; kW for
/// electric), and how common it is.
struct EngineModel {
    cylinders: u32,
    tenths: u32,
    fuel: Fuel,
    turbo: bool,
    ratings: &'static [u32],
    weight: u32,
}

const fn model(
    cylinders: u32,
    tenths: u32,
    fuel: Fuel,
    turbo: bool,
    ratings: &'static [u32],
    weight: u32,
) -> EngineModel {
    EngineModel {
        cylinders,
        tenths,
        fuel,
        turbo,
        ratings,
        weight,
    }
}

const ENGINE_MODELS: &[EngineModel] = {
    use Fuel::{Diesel, Electric, Gasoline, Lpg};
    &[
        // compact tractors, mowers, mini excavators
        model(2, 9, Diesel, false, &[18, 20, 22], 3),
        model(3, 11, Diesel, false, &[21, 24, 25], 4),
        model(3, 15, Diesel, false, &[28, 31, 33], 5),
        model(3, 18, Diesel, false, &[33, 37], 4),
        model(3, 22, Diesel, true, &[45, 49], 3),
        model(3, 29, Diesel, false, &[45, 50, 55], 5),
        model(3, 33, Diesel, true, &[60, 66], 3),
        // utility tractors, backhoes, skid steers
        model(4, 22, Diesel, false, &[38, 44], 3),
        model(4, 24, Diesel, false, &[49, 55], 4),
        model(4, 33, Diesel, true, &[65, 74, 84], 5),
        model(4, 34, Diesel, true, &[75, 90], 4),
        model(4, 44, Diesel, true, &[99, 105, 115], 5),
        model(4, 45, Diesel, true, &[100, 110, 120, 125], 9),
        model(4, 45, Diesel, false, &[80, 85], 4),
        model(4, 48, Diesel, true, &[115, 130], 3),
        model(4, 50, Diesel, true, &[125, 140], 2),
        // row-crop tractors, loaders, graders
        model(6, 60, Diesel, true, &[140, 155, 170], 4),
        model(6, 67, Diesel, true, &[165, 180, 200], 5),
        model(6, 68, Diesel, true, &[150, 175, 195, 225], 8),
        model(6, 68, Diesel, false, &[120, 135], 3),
        model(6, 71, Diesel, true, &[190, 215], 2),
        model(6, 74, Diesel, true, &[210, 235], 2),
        model(6, 83, Diesel, true, &[240, 260], 3),
        model(6, 90, Diesel, true, &[275, 300, 325], 3),
        model(6, 125, Diesel, true, &[370, 400, 430], 2),
        model(6, 135, Diesel, true, &[450, 480, 520], 1),
        // large dozers and haul trucks
        model(8, 152, Diesel, true, &[560, 620], 1),
        model(12, 270, Diesel, true, &[850, 1000], 1),
        // small engines, utility vehicles
        model(1, 4, Gasoline, false, &[12, 14, 16], 3),
        model(2, 7, Gasoline, false, &[22, 25, 27], 4),
        model(4, 20, Gasoline, false, &[50, 60], 2),
        model(6, 43, Gasoline, false, &[150, 190], 2),
        model(8, 50, Gasoline, false, &[220], 1),
        model(8, 57, Gasoline, false, &[250, 300], 2),
        // forklifts
        model(4, 20, Lpg, false, &[45], 2),
        model(4, 24, Lpg, false, &[50, 55], 3),
        model(6, 43, Lpg, false, &[85, 100], 2),
        // battery machines (ratings in kW)
        model(0, 0, Electric, false, &[10, 15, 20, 30, 45], 5),
    ]
};

const VOLTAGES: &[u32] = &[48, 80, 24, 36];

/// 1 hp (550 ft·lbf/s) = 745.699 871 582 270 22 W exactly.
const WATTS_PER_HP: f64 = 745.699_871_582_270_2;
/// 1 PS (75 kgf·m/s) = 735.498 75 W exactly.
const WATTS_PER_PS: f64 = 735.498_75;
/// 1 in³ = 16.387 064 cm³ exactly (1 in = 2.54 cm).
const LITRES_PER_CUBIC_INCH: f64 = 0.016_387_064;

/// The engine in the machine for sale.
#[derive(Clone)]
struct EngineSpec {
    model: &'static EngineModel,
    rating: u32,
    volts: u32,
}

impl EngineSpec {
    fn hp(&self) -> u32 {
        match self.model.fuel {
            Fuel::Electric => kw_as_whole_hp(self.rating),
            _ => self.rating,
        }
    }

    fn kw(&self) -> u32 {
        match self.model.fuel {
            Fuel::Electric => self.rating,
            _ => (f64::from(self.rating) * WATTS_PER_HP / 1000.0).round() as u32,
        }
    }
}

fn kw_as_whole_hp(kw: u32) -> u32 {
    (f64::from(kw) * 1000.0 / WATTS_PER_HP).round() as u32
}

fn fit_engine(d: &mut Dice) -> EngineSpec {
    let weights: Vec<u32> = ENGINE_MODELS.iter().map(|m| m.weight).collect();
    let model = &ENGINE_MODELS[d.weighted(&weights)];
    let rating = model.ratings[d.habitual(model.ratings.len())];
    let volts = VOLTAGES[d.habitual(VOLTAGES.len())];
    EngineSpec {
        model,
        rating,
        volts,
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum EnginePart {
    Cylinders,
    Turbo,
    Fuel,
    Displacement,
    Power,
    Volts,
}

/// The seller's description of an engine, and what it states.
fn describe_engine(d: &mut Dice, e: &EngineSpec, extended: bool) -> (String, EngineFeatures) {
    if e.model.fuel == Fuel::Electric {
        return describe_motor(d, e, extended);
    }
    let m = e.model;
    let mut cyl = d.chance(0.85);
    let disp = d.chance(0.7);
    let power = d.chance(0.6);
    let fuel = d.chance(0.88) || !(cyl || disp || power);
    let odd = if extended && d.chance(EXTENDED_RATE) {
        odd_engine_part(d, [cyl, disp, power, fuel])
    } else {
        None
    };
    let is_odd = |p: EnginePart| odd == Some(p);
    let mut text = Words::default();
    let mut features = EngineFeatures {
        cylinders: None,
        displacement_l: None,
        power_hp: None,
        turbo: false,
        fuel: None,
    };
    if cyl {
        let phrase = cylinder_phrase(d, m, is_odd(EnginePart::Cylinders));
        cyl = phrase.is_some();
        text.put(EnginePart::Cylinders, phrase);
    }
    features.cylinders = cyl.then_some(m.cylinders);
    if disp {
        let (phrase, litres) = displacement_phrase(d, m.tenths, is_odd(EnginePart::Displacement));
        text.put(EnginePart::Displacement, Some(phrase));
        features.displacement_l = Some(litres);
    }
    if power {
        let (phrase, hp) = power_phrase(d, e, is_odd(EnginePart::Power));
        text.put(EnginePart::Power, Some(phrase));
        features.power_hp = Some(hp);
    }
    let (turbo_text, fuel_text, turbo) = turbo_and_fuel(
        d,
        m,
        fuel,
        is_odd(EnginePart::Turbo),
        is_odd(EnginePart::Fuel),
    );
    text.put(EnginePart::Turbo, turbo_text);
    text.put(EnginePart::Fuel, fuel_text);
    features.turbo = turbo;
    features.fuel = fuel.then_some(m.fuel);
    (
        text.arrange(d, ENGINE_ORDERS, &[45, 15, 12, 10, 10, 8]),
        features,
    )
}

/// Battery machines: "electric 48V 20kW".
fn describe_motor(d: &mut Dice, e: &EngineSpec, extended: bool) -> (String, EngineFeatures) {
    let volts = d.chance(0.7);
    let power = d.chance(0.8);
    let odd = extended && d.chance(EXTENDED_RATE);
    let mut text = Words::default();
    let fuel_words = if odd && !power {
        ODD_MOTOR_WORDS
    } else {
        MOTOR_WORDS
    };
    text.put(EnginePart::Fuel, Some(d.one_of(fuel_words).to_owned()));
    if volts {
        text.put(
            EnginePart::Volts,
            Some(spell(d.one_of(VOLT_SPELLINGS), e.volts)),
        );
    }
    let mut power_hp = None;
    if power {
        let (phrase, hp) = power_phrase(d, e, odd);
        text.put(EnginePart::Power, Some(phrase));
        power_hp = Some(hp);
    }
    let features = EngineFeatures {
        cylinders: None,
        displacement_l: None,
        power_hp,
        turbo: false,
        fuel: Some(Fuel::Electric),
    };
    (text.arrange(d, MOTOR_ORDERS, &[40, 25, 20, 15]), features)
}

fn odd_engine_part(d: &mut Dice, [cyl, disp, power, fuel]: [bool; 4]) -> Option<EnginePart> {
    let candidates: Vec<EnginePart> = [
        (cyl, EnginePart::Cylinders),
        (disp, EnginePart::Displacement),
        (power, EnginePart::Power),
        (true, EnginePart::Turbo),
        (fuel, EnginePart::Fuel),
    ]
    .into_iter()
    .filter_map(|(ok, part)| ok.then_some(part))
    .collect();
    Some(candidates[d.below(candidates.len())])
}

/// The phrases of one engine description, by part.
#[derive(Default)]
struct Words(Vec<(EnginePart, String)>);

impl Words {
    fn put(&mut self, part: EnginePart, phrase: Option<String>) {
        if let Some(p) = phrase {
            self.0.push((part, p));
        }
    }

    fn arrange(&self, d: &mut Dice, orders: &[&[EnginePart]], weights: &[u32]) -> String {
        let order = orders[d.weighted(weights)];
        let sep = ENGINE_SEPARATORS[d.weighted(&[82, 12, 3, 3])];
        let words: Vec<&str> = order
            .iter()
            .filter_map(|p| self.0.iter().find(|(q, _)| q == p).map(|(_, w)| w.as_str()))
            .collect();
        words.join(sep)
    }
}

const ENGINE_ORDERS: &[&[EnginePart]] = {
    use EnginePart::{Cylinders as C, Displacement as D, Fuel as F, Power as P, Turbo as T};
    &[
        &[C, T, F, D, P],
        &[D, C, T, F, P],
        &[F, C, T, D, P],
        &[C, D, T, F, P],
        &[P, T, F, C, D],
        &[T, F, D, C, P],
    ]
};
const MOTOR_ORDERS: &[&[EnginePart]] = {
    use EnginePart::{Fuel as F, Power as P, Volts as V};
    &[&[F, V, P], &[V, F, P], &[P, F, V], &[F, P, V]]
};
const ENGINE_SEPARATORS: &[&str] = &[" ", ", ", " / ", " - "];

const CYLINDER_SPELLINGS: &[&str] = &[
    "{n} cyl",
    "{n}-cyl",
    "{n}cyl",
    "{n} cyl.",
    "{n} cylinder",
    "{n}-cylinder",
    "{n} Cyl.",
    "{n}-cyl.",
];
const INLINE_SPELLINGS: &[&str] = &["inline {n}", "inline-{n}"];
const ODD_CYLINDER_SPELLINGS: &[&str] = &[
    "cyl x{n}",
    "{w}-cylinder",
    "{w} cyl",
    "straight-{n}",
    "{n} pot",
];

/// `None` when the cylinder count has no odd spelling to offer.
fn cylinder_phrase(d: &mut Dice, m: &EngineModel, odd: bool) -> Option<String> {
    let n = m.cylinders;
    if odd {
        return Some(odd_cylinders(d, n));
    }
    let vee = n >= 6 && (m.fuel != Fuel::Diesel || n >= 8);
    if vee && d.chance(0.5) {
        return Some(format!("V{n}"));
    }
    if (n == 4 || n == 6) && d.chance(0.04) {
        return Some(spell(d.one_of(INLINE_SPELLINGS), n));
    }
    Some(spell(d.one_of(CYLINDER_SPELLINGS), n))
}

fn odd_cylinders(d: &mut Dice, n: u32) -> String {
    match n {
        1 => "single cyl".to_owned(),
        2 if d.chance(0.5) => "twin cyl".to_owned(),
        _ => spell(d.one_of(ODD_CYLINDER_SPELLINGS), n)
            .replace("{w}", &number_word(n).unwrap_or_default()),
    }
}

const LITRE_SPELLINGS: &[&str] = &[
    "{n}L",
    "{n} L",
    "{n}l",
    "{n} litre",
    "{n} liter",
    "{n}-litre",
    "{n} Liter",
];
const CC_SPELLINGS: &[&str] = &["{n}cc", "{n} cc", "{n} CC"];
const CUBIC_INCH_SPELLINGS: &[&str] = &[
    "{n} ci",
    "{n}ci",
    "{n} cu in",
    "{n} cid",
    "{n} cu. in.",
    "{n} CID",
];

/// Displacement as written, and the litres it states.
fn displacement_phrase(d: &mut Dice, tenths: u32, odd: bool) -> (String, f64) {
    if odd {
        return odd_displacement(d, tenths);
    }
    let cc_share = if tenths <= 25 { 0.35 } else { 0.06 };
    let x = d.fraction();
    if x < cc_share {
        (
            spell(d.one_of(CC_SPELLINGS), tenths * 100),
            f64::from(tenths) / 10.0,
        )
    } else if x < cc_share + 0.12 {
        let ci = cubic_inches(tenths);
        (
            spell(d.one_of(CUBIC_INCH_SPELLINGS), ci),
            f64::from(ci) * LITRES_PER_CUBIC_INCH,
        )
    } else {
        (
            spell(d.one_of(LITRE_SPELLINGS), litres_text(d, tenths)),
            f64::from(tenths) / 10.0,
        )
    }
}

/// Whole cubic inches nearest to a displacement in tenths of a litre.
fn cubic_inches(tenths: u32) -> u32 {
    (f64::from(tenths) / 10.0 / LITRES_PER_CUBIC_INCH).round() as u32
}

/// "4.5", "5.0" or "5", "0.9" or ".9".
fn litres_text(d: &mut Dice, tenths: u32) -> String {
    let (whole, tenth) = (tenths / 10, tenths % 10);
    match (whole, tenth) {
        (0, t) if d.chance(0.15) => format!(".{t}"),
        (w, 0) if d.chance(0.4) => format!("{w}"),
        (w, t) => format!("{w}.{t}"),
    }
}

fn odd_displacement(d: &mut Dice, tenths: u32) -> (String, f64) {
    let litres = f64::from(tenths) / 10.0;
    let (whole, tenth) = (tenths / 10, tenths % 10);
    match d.below(4) {
        0 if tenth == 5 && whole > 0 => {
            let mixed = if d.chance(0.5) {
                format!("{whole} 1/2")
            } else {
                format!("{whole}-1/2")
            };
            (format!("{mixed} {}", d.one_of(&["L", "litre"])), litres)
        }
        1 if tenths >= 10 => (
            format!(
                "{},{:03} {}",
                tenths / 10,
                tenth * 100,
                d.one_of(&["cc", "CC"])
            ),
            litres,
        ),
        2 => {
            let ci = cubic_inches(tenths);
            (
                format!("{ci} {}", d.one_of(&["cubic inch", "cu.inch"])),
                f64::from(ci) * LITRES_PER_CUBIC_INCH,
            )
        }
        _ => (
            format!(
                "{}{}",
                litres_text(d, tenths),
                d.one_of(&[" ltr", "ltr", " lts", "-ltr"])
            ),
            litres,
        ),
    }
}

const HP_SPELLINGS: &[&str] = &[
    "{n}hp", "{n} hp", "{n} HP", "{n}HP", "{n} Hp", "{n}-hp", "{n} bhp",
];
const KW_SPELLINGS: &[&str] = &["{n} kW", "{n}kW", "{n} kw", "{n}kw", "{n} KW"];

/// Power as written, and the horsepower it states.
fn power_phrase(d: &mut Dice, e: &EngineSpec, odd: bool) -> (String, f64) {
    if odd {
        return odd_power(d, e);
    }
    let in_kw = d.chance(if e.model.fuel == Fuel::Electric {
        0.75
    } else {
        0.15
    });
    if in_kw {
        (spell(d.one_of(KW_SPELLINGS), e.kw()), kw_in_hp(e.kw()))
    } else {
        (spell(d.one_of(HP_SPELLINGS), e.hp()), f64::from(e.hp()))
    }
}

fn kw_in_hp(kw: u32) -> f64 {
    f64::from(kw) * 1000.0 / WATTS_PER_HP
}

fn odd_power(d: &mut Dice, e: &EngineSpec) -> (String, f64) {
    let (hp, kw) = (e.hp(), e.kw());
    match d.below(4) {
        0 => (format!("{hp} hp / {kw} kW"), f64::from(hp)),
        1 => (format!("{hp}hp/{kw}kw"), f64::from(hp)),
        2 => {
            let ps = (f64::from(hp) * WATTS_PER_HP / WATTS_PER_PS).round() as u32;
            (
                spell(d.one_of(&["{n} PS", "{n}ps", "{n} PS (metric)"]), ps),
                f64::from(ps) * WATTS_PER_PS / WATTS_PER_HP,
            )
        }
        _ => (
            spell(d.one_of(&["{n} horsepower", "{n} h.p.", "{n} horse"]), hp),
            f64::from(hp),
        ),
    }
}

const TURBO_WORDS: &[&str] = &[
    "turbo",
    "Turbo",
    "turbocharged",
    "T/C",
    "turbo-charged",
    "TURBO",
];
const TURBO_DIESEL_WORDS: &[&str] = &[
    "turbo diesel",
    "Turbo Diesel",
    "turbodiesel",
    "TD",
    "turbo-diesel",
];
const DIESEL_WORDS: &[&str] = &["diesel", "Diesel", "dsl", "DIESEL", "dsl.", "diesel eng."];
const GASOLINE_WORDS: &[&str] = &["gas", "gasoline", "petrol", "Gas", "gas eng."];
const LPG_WORDS: &[&str] = &["LPG", "propane", "LP gas", "lpg", "LP"];
const MOTOR_WORDS: &[&str] = &[
    "electric",
    "battery electric",
    "Electric",
    "elec.",
    "electric motor",
];
const VOLT_SPELLINGS: &[&str] = &["{n}V", "{n} V", "{n}-volt", "{n} volt", "{n}v"];

const ODD_TURBO_WORDS: &[&str] = &["twin turbo", "turbo'd", "turbo intercooled"];
const ODD_ASPIRATED_WORDS: &[&str] = &["non-turbo", "no turbo"];
const ODD_DIESEL_WORDS: &[&str] = &["dies.", "derv"];
const ODD_GASOLINE_WORDS: &[&str] = &["unleaded", "benzine"];
const ODD_LPG_WORDS: &[&str] = &["bottled gas", "autogas"];
const ODD_MOTOR_WORDS: &[&str] = &["battery", "BEV", "e-drive"];

/// The turbo and fuel phrases, and whether a turbocharger is stated.
/// A turbo diesel may be written as one word ("turbodiesel", "TD").
fn turbo_and_fuel(
    d: &mut Dice,
    m: &EngineModel,
    fuel_shown: bool,
    odd_turbo: bool,
    odd_fuel: bool,
) -> (Option<String>, Option<String>, bool) {
    let fuel = fuel_shown.then(|| fuel_word(d, m.fuel, odd_fuel));
    if odd_turbo {
        let words = if m.turbo {
            ODD_TURBO_WORDS
        } else {
            ODD_ASPIRATED_WORDS
        };
        return (Some(d.one_of(words).to_owned()), fuel, m.turbo);
    }
    let turbo = m.turbo && d.chance(0.75);
    if turbo && fuel_shown && !odd_fuel && m.fuel == Fuel::Diesel && d.chance(0.35) {
        return (Some(d.one_of(TURBO_DIESEL_WORDS).to_owned()), None, true);
    }
    if !m.turbo && m.fuel == Fuel::Diesel && d.chance(0.02) {
        return (Some("nat. asp.".to_owned()), fuel, false);
    }
    (turbo.then(|| d.one_of(TURBO_WORDS).to_owned()), fuel, turbo)
}

fn fuel_word(d: &mut Dice, fuel: Fuel, odd: bool) -> String {
    let spellings = match fuel {
        Fuel::Diesel => Spellings::new(DIESEL_WORDS, ODD_DIESEL_WORDS),
        Fuel::Gasoline => Spellings::new(GASOLINE_WORDS, ODD_GASOLINE_WORDS),
        Fuel::Lpg => Spellings::new(LPG_WORDS, ODD_LPG_WORDS),
        Fuel::Electric => Spellings::new(MOTOR_WORDS, ODD_MOTOR_WORDS),
    };
    spellings.pick(d, odd).to_owned()
}

// ---------------------------------------------------------------------------
// Part numbers
// ---------------------------------------------------------------------------

/// Popular parts that many listings repeat.
const STOCK_PARTS: usize = 150;
const STOCK_PART_SHARE: f64 = 0.25;

const FAMILIES: [PartFamily; 6] = [
    PartFamily::Filter,
    PartFamily::Seal,
    PartFamily::Hose,
    PartFamily::Bearing,
    PartFamily::Valve,
    PartFamily::Pump,
];
const FAMILY_WEIGHTS: [u32; 6] = [30, 18, 15, 15, 12, 10];
/// Grade letters: no I, O, Q (read as digits) and no R (marks a revision).
const GRADE_LETTERS: &[u8] = b"ABCDEFGHJKLMNPSTUVWXYZ";

/// A part number's parts: FAM-SIZE-GRADE[-Rn].
#[derive(Debug, Clone)]
struct PartCode {
    family: PartFamily,
    size: u32,
    grade: String,
    rev: Option<u32>,
}

impl PartCode {
    fn features(&self) -> PartFeatures {
        PartFeatures {
            family: self.family,
            size: self.size,
            rev: self.rev,
        }
    }

    /// The pieces in order: family, size (4 digits), grade, revision.
    fn pieces(&self) -> Vec<String> {
        let mut p = vec![
            self.family.prefix().to_owned(),
            format!("{:04}", self.size),
            self.grade.clone(),
        ];
        p.extend(self.rev.map(|r| format!("R{r}")));
        p
    }
}

fn make_part(d: &mut Dice) -> PartCode {
    let family = FAMILIES[d.weighted(&FAMILY_WEIGHTS)];
    let size = 10 + d.below(9990) as u32;
    let letter = char::from(GRADE_LETTERS[d.below(GRADE_LETTERS.len())]);
    let grade = if d.chance(0.6) {
        format!("{}{letter}", 1 + d.below(9))
    } else {
        letter.to_string()
    };
    let rev = d.chance(0.25).then(|| 1 + d.below(5) as u32);
    PartCode {
        family,
        size,
        grade,
        rev,
    }
}

const PART_LABELS: &[&str] = &["P/N ", "PN: ", "pn ", "Part# ", "#"];

fn write_part_number(d: &mut Dice, code: &PartCode, extended: bool) -> String {
    let typed = if extended && d.chance(EXTENDED_RATE) {
        odd_part_number(d, code)
    } else {
        usual_part_number(d, code)
    };
    let cased = if d.chance(0.2) {
        typed.to_lowercase()
    } else {
        typed
    };
    let mut s = cased;
    if d.chance(0.003) {
        s = replace_a_space(d, &s, "\u{a0}");
    }
    if d.chance(0.002) {
        s = full_width_digits(&s);
    }
    pad(d, s, LEADING_SPACE_RATE, TRAILING_SPACE_RATE)
}

fn usual_part_number(d: &mut Dice, code: &PartCode) -> String {
    let p = code.pieces();
    let tail = p[3..].iter().map(|r| format!("-{r}")).collect::<String>();
    match d.weighted(&[58, 9, 6, 5, 5, 3]) {
        0 => p.join("-"),
        1 => p.join(" "),
        2 => p.concat(),
        3 => format!("{}-{} {}", p[0], p[1], p[2..].join(" ")),
        4 => format!("{}-{}{}{tail}", p[0], p[1], p[2]),
        _ => format!("{}{}", d.one_of(PART_LABELS), p.join("-")),
    }
}

/// Only spellings the standard sample never has.
fn odd_part_number(d: &mut Dice, code: &PartCode) -> String {
    let p = code.pieces();
    let short_size = code.size < 1000;
    match d.below(5) {
        0 => p.join("."),
        1 => p.join("_"),
        2 => p.join("/"),
        3 if short_size => {
            let mut q = p.clone();
            q[1] = code.size.to_string();
            q.join("-")
        }
        _ => match code.rev {
            Some(r) => format!(
                "{} {}",
                p[..3].join("-"),
                spell(d.one_of(&["rev {n}", "rev.{n}", "Rev. {n}"]), r)
            ),
            None => p.join("."),
        },
    }
}

// ---------------------------------------------------------------------------
// Prices
// ---------------------------------------------------------------------------

/// An asking price in whole dollars, led by power and gearbox, worn down by
/// age and hours.
fn asking_price(d: &mut Dice, g: &Gearbox, e: &EngineSpec) -> u32 {
    let gearbox_premium = match g.kind {
        GearboxKind::Cvt => 18_000,
        GearboxKind::Powershift => 9_000,
        GearboxKind::Hydrostatic => 2_000,
        _ => 0,
    } + if g.creeper { 2_500 } else { 0 };
    let new_price = 4_000 + e.hp() * 520 + gearbox_premium;
    let kept_percent = 30 + d.below(65) as u32;
    new_price * kept_percent / 100 / 50 * 50
}

// ---------------------------------------------------------------------------
// CSV
// ---------------------------------------------------------------------------

/// RFC 4180 field: quoted when it holds a comma, quote or line break, when
/// it is empty (an unquoted empty field is a null), or when it starts or
/// ends with white space (so no reader trims it).
fn csv_field(v: &str) -> Cow<'_, str> {
    let quote = v.is_empty()
        || v.contains([',', '"', '\n', '\r'])
        || v.starts_with(char::is_whitespace)
        || v.ends_with(char::is_whitespace);
    if quote {
        Cow::Owned(format!("\"{}\"", v.replace('"', "\"\"")))
    } else {
        Cow::Borrowed(v)
    }
}

fn cell(v: Option<&str>) -> Cow<'_, str> {
    v.map_or(Cow::Borrowed(""), csv_field)
}

fn write_listing<W: Write>(out: &mut W, l: &Listing) -> io::Result<()> {
    writeln!(
        out,
        "{},{},{},{},{}",
        l.listing_id,
        cell(l.transmission.as_deref()),
        cell(l.engine.as_deref()),
        cell(l.part_no.as_deref()),
        l.price_usd
    )
}

/// A decimal with at most six places and no trailing zeros.
fn decimal(x: f64) -> String {
    let s = format!("{x:.6}");
    s.trim_end_matches('0').trim_end_matches('.').to_owned()
}

fn opt<T: ToString>(v: Option<T>) -> String {
    v.map_or(String::new(), |x| x.to_string())
}

/// The feature columns of a truth file.
trait FeatureColumns {
    const HEADER: &'static [&'static str];
    fn cells(&self) -> Vec<String>;
}

impl FeatureColumns for GearboxFeatures {
    const HEADER: &'static [&'static str] =
        &["gears", "kind", "shuttle", "creeper", "max_speed_kmh"];
    fn cells(&self) -> Vec<String> {
        vec![
            opt(self.gears),
            self.kind.label().to_owned(),
            self.shuttle.to_string(),
            self.creeper.to_string(),
            opt(self.max_speed_kmh.map(decimal)),
        ]
    }
}

impl FeatureColumns for EngineFeatures {
    const HEADER: &'static [&'static str] =
        &["cylinders", "displacement_l", "power_hp", "turbo", "fuel"];
    fn cells(&self) -> Vec<String> {
        vec![
            opt(self.cylinders),
            opt(self.displacement_l.map(decimal)),
            opt(self.power_hp.map(decimal)),
            self.turbo.to_string(),
            opt(self.fuel.map(Fuel::label)),
        ]
    }
}

impl FeatureColumns for PartFeatures {
    const HEADER: &'static [&'static str] = &["family", "size", "rev"];
    fn cells(&self) -> Vec<String> {
        vec![
            self.family.label().to_owned(),
            self.size.to_string(),
            opt(self.rev),
        ]
    }
}

/// `value,<features>,placeholder,rows`, one line per distinct value.
fn write_truth_column<F: FeatureColumns>(path: &Path, column: &TruthColumn<F>) -> io::Result<()> {
    let mut out = BufWriter::new(File::create(path)?);
    writeln!(out, "value,{},placeholder,rows", F::HEADER.join(","))?;
    for (raw, entry) in column {
        let cells = match &entry.features {
            Some(f) => f.cells(),
            None => vec![String::new(); F::HEADER.len()],
        };
        let placeholder = entry.features.is_none();
        writeln!(
            out,
            "{},{},{placeholder},{}",
            csv_field(raw),
            cells.join(","),
            entry.rows
        )?;
    }
    out.flush()
}

// ---------------------------------------------------------------------------
// Tests
// ---------------------------------------------------------------------------

#[cfg(test)]
mod tests {
    use super::*;

    fn opts(rows: usize, seed: u64, variants: Variants) -> SampleOptions {
        SampleOptions {
            rows,
            seed,
            variants,
            spellings: None,
            drift: false,
        }
    }

    #[test]
    fn a_drifted_drop_changes_engines_only_and_its_truth_counts_its_rows() {
        let base = generate(&opts(3000, 7, Variants::Standard));
        let next = generate(&SampleOptions {
            drift: true,
            ..opts(3000, 7, Variants::Standard)
        });
        let mut changed = 0;
        for (a, b) in base.listings.iter().zip(&next.listings) {
            assert_eq!(a.listing_id, b.listing_id);
            assert_eq!(a.transmission, b.transmission);
            assert_eq!(a.part_no, b.part_no);
            assert_eq!(a.price_usd, b.price_usd);
            assert_eq!(a.engine.is_some(), b.engine.is_some());
            changed += usize::from(a.engine != b.engine);
        }
        assert!(changed > 100, "{changed}");
        let rows: u64 = next.truth.engine.values().map(|e| e.rows).sum();
        let engines: Vec<&String> = next.listings.iter().flat_map(|l| &l.engine).collect();
        assert_eq!(rows, engines.len() as u64);
        assert!(engines.iter().all(|e| next.truth.engine.contains_key(*e)));
        assert_eq!(next.truth.conflicts, 0);
    }

    fn bounded(rows: usize, seed: u64, variants: Variants, n: usize) -> SampleOptions {
        SampleOptions {
            spellings: Some(n),
            ..opts(rows, seed, variants)
        }
    }

    fn read_all(dir: &Path) -> Vec<(String, Vec<u8>)> {
        [
            "listings.csv",
            "truth/transmission.csv",
            "truth/engine.csv",
            "truth/part_no.csv",
        ]
        .iter()
        .map(|f| (f.to_string(), fs::read(dir.join(f)).unwrap()))
        .collect()
    }

    /// A strict RFC 4180 reader: records of fields, `None` for an unquoted
    /// empty field.
    fn parse_csv(text: &str) -> Vec<Vec<Option<String>>> {
        let mut records = Vec::new();
        let mut record = Vec::new();
        let mut chars = text.chars().peekable();
        loop {
            let mut field = String::new();
            let quoted = chars.peek() == Some(&'"');
            if quoted {
                chars.next();
                loop {
                    match chars.next().expect("unterminated quote") {
                        '"' if chars.peek() == Some(&'"') => {
                            chars.next();
                            field.push('"');
                        }
                        '"' => break,
                        c => field.push(c),
                    }
                }
            }
            while let Some(&c) = chars.peek() {
                if c == ',' || c == '\n' {
                    break;
                }
                assert!(!quoted, "text after a closing quote");
                field.push(c);
                chars.next();
            }
            record.push(if field.is_empty() && !quoted {
                None
            } else {
                Some(field)
            });
            match chars.next() {
                Some(',') => continue,
                Some('\n') => records.push(std::mem::take(&mut record)),
                None => break,
                Some(c) => panic!("unexpected {c:?}"),
            }
        }
        records
    }

    #[test]
    fn same_options_give_the_same_bytes() {
        let (a, b) = (tempfile::tempdir().unwrap(), tempfile::tempdir().unwrap());
        for variants in [Variants::Standard, Variants::Extended] {
            let o = opts(3000, 11, variants);
            write_sample(a.path(), &o).unwrap();
            write_sample(b.path(), &o).unwrap();
            assert_eq!(read_all(a.path()), read_all(b.path()));
        }
    }

    #[test]
    fn the_default_options_write_the_committed_sample() {
        let dir = tempfile::tempdir().unwrap();
        write_sample(dir.path(), &SampleOptions::default()).unwrap();
        let committed = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples");
        assert!(read_all(dir.path()) == read_all(&committed));
    }

    #[test]
    fn a_bounded_vocabulary_is_seeded_and_zero_means_unbounded() {
        let (a, b) = (tempfile::tempdir().unwrap(), tempfile::tempdir().unwrap());
        let o = bounded(3000, 11, Variants::Standard, 200);
        write_sample(a.path(), &o).unwrap();
        write_sample(b.path(), &o).unwrap();
        assert_eq!(read_all(a.path()), read_all(b.path()));
        let unbounded = generate(&opts(3000, 11, Variants::Standard)).listings;
        assert_ne!(generate(&o).listings, unbounded);
        assert_eq!(
            generate(&bounded(3000, 11, Variants::Standard, 0)).listings,
            unbounded
        );
    }

    #[test]
    fn a_bounded_vocabulary_caps_the_descriptor_columns_only() {
        for variants in [Variants::Standard, Variants::Extended] {
            let n = 300;
            let mut rows = Listings::new(&bounded(60_000, 5, variants, n));
            rows.by_ref().for_each(drop);
            assert_eq!(rows.conflicts(), 0, "{variants:?}");
            let t = rows.into_truth();
            fn described<F>(c: &TruthColumn<F>) -> usize {
                c.values().filter(|e| e.features.is_some()).count()
            }
            for (name, spellings) in [
                ("transmission", described(&t.transmission)),
                ("engine", described(&t.engine)),
            ] {
                // Nearly all of the pool shows up in 60,000 rows: the rarest
                // spelling is drawn by about 1 row in 600.
                assert!(
                    (n * 9 / 10..=n).contains(&spellings),
                    "{name}: {spellings} spellings, {variants:?}"
                );
            }
            assert!(t.transmission.len() <= n + BLANKS.len() + PLACEHOLDERS.len());
            assert!(t.engine.len() <= n + BLANKS.len() + PLACEHOLDERS.len());
            assert!(t.part_no.len() as f64 > 0.6 * 60_000.0);
        }
    }

    #[test]
    fn a_bounded_vocabulary_keeps_the_truth_and_the_gap_rates() {
        let s = generate(&bounded(40_000, 3, Variants::Extended, 500));
        let mut counts: BTreeMap<&str, u64> = BTreeMap::new();
        for l in &s.listings {
            if let Some(v) = l.transmission.as_deref() {
                *counts.entry(v).or_default() += 1;
            }
        }
        assert_eq!(counts.len(), s.truth.transmission.len());
        for (raw, n) in &counts {
            assert_eq!(s.truth.transmission[*raw].rows, *n, "{raw:?}");
        }
        let nulls = s.listings.iter().filter(|l| l.engine.is_none()).count() as f64 / 40_000.0;
        assert!((0.015..0.025).contains(&nulls), "nulls {nulls}");
        // The head spelling is common, the pool's tail rare.
        let mut rows: Vec<u64> = s
            .truth
            .engine
            .values()
            .filter(|e| e.features.is_some())
            .map(|e| e.rows)
            .collect();
        rows.sort_unstable_by(|a, b| b.cmp(a));
        assert!(rows[0] > 10 * rows[rows.len() / 2], "{rows:?}");
    }

    #[test]
    fn another_seed_gives_other_listings() {
        let a = generate(&opts(200, 1, Variants::Standard));
        let b = generate(&opts(200, 2, Variants::Standard));
        assert_ne!(a.listings, b.listings);
    }

    #[test]
    fn no_raw_value_has_two_truths() {
        for seed in [1, 7, 42] {
            for variants in [Variants::Standard, Variants::Extended] {
                let mut rows = Listings::new(&opts(60_000, seed, variants));
                rows.by_ref().for_each(drop);
                assert_eq!(rows.conflicts(), 0, "seed {seed}, {variants:?}");
            }
        }
    }

    #[test]
    fn every_value_is_in_the_truth_with_its_row_count() {
        let s = generate(&opts(5000, 3, Variants::Extended));
        let mut counts: BTreeMap<&str, u64> = BTreeMap::new();
        for l in &s.listings {
            *counts
                .entry(l.engine.as_deref().unwrap_or("\0null"))
                .or_default() += 1;
        }
        for (raw, n) in &counts {
            if *raw != "\0null" {
                assert_eq!(s.truth.engine[*raw].rows, *n, "{raw:?}");
            }
        }
        assert_eq!(counts.len() - 1, s.truth.engine.len());
    }

    #[test]
    fn gaps_come_at_their_rates() {
        let s = generate(&opts(40_000, 5, Variants::Standard));
        let n = s.listings.len() as f64;
        let nulls = s
            .listings
            .iter()
            .filter(|l| l.transmission.is_none())
            .count() as f64
            / n;
        let gaps: u64 = s
            .truth
            .transmission
            .values()
            .filter(|e| e.features.is_none())
            .map(|e| e.rows)
            .sum();
        let gaps = gaps as f64 / n;
        assert!((0.015..0.025).contains(&nulls), "nulls {nulls}");
        assert!(
            (0.022..0.030).contains(&gaps),
            "blanks and placeholders {gaps}"
        );
    }

    #[test]
    fn listings_csv_reads_back() {
        let dir = tempfile::tempdir().unwrap();
        let o = opts(4000, 9, Variants::Extended);
        write_sample(dir.path(), &o).unwrap();
        let text = fs::read_to_string(dir.path().join("listings.csv")).unwrap();
        let records = parse_csv(&text);
        let listings = generate(&o).listings;
        assert_eq!(records.len(), listings.len() + 1);
        for (r, l) in records[1..].iter().zip(&listings) {
            let want = [
                Some(l.listing_id.clone()),
                l.transmission.clone(),
                l.engine.clone(),
                l.part_no.clone(),
            ];
            assert_eq!(r[..4], want);
            assert_eq!(r[4].as_deref(), Some(l.price_usd.to_string().as_str()));
        }
        let truth = fs::read_to_string(dir.path().join("truth/engine.csv")).unwrap();
        let records = parse_csv(&truth);
        assert!(records.iter().all(|r| r.len() == 8));
        assert!(records
            .iter()
            .any(|r| r[0].as_deref().is_some_and(|v| v.contains(','))));
    }

    #[test]
    fn blanks_and_placeholders_have_no_features() {
        let s = generate(&opts(8000, 4, Variants::Standard));
        for (raw, e) in &s.truth.transmission {
            let gap = raw.trim().is_empty() || PLACEHOLDERS.contains(&raw.as_str());
            assert_eq!(gap, e.features.is_none(), "{raw:?}");
        }
    }

    #[test]
    fn distinct_values_grow_with_rows() {
        let small = generate(&opts(4000, 7, Variants::Standard)).truth;
        let mut big = Listings::new(&opts(200_000, 7, Variants::Standard));
        big.by_ref().for_each(drop);
        let big = big.into_truth();
        assert!(big.transmission.len() > 2 * small.transmission.len());
        assert!(big.engine.len() > 3 * small.engine.len());
        assert!(big.transmission.len() > 1500, "{}", big.transmission.len());
        assert!(big.part_no.len() as f64 > 0.6 * 200_000.0);
    }

    #[test]
    fn head_spellings_are_common_and_the_tail_long() {
        let t = generate(&opts(4000, 7, Variants::Standard)).truth;
        let mut rows: Vec<u64> = t.transmission.values().map(|e| e.rows).collect();
        rows.sort_unstable_by(|a, b| b.cmp(a));
        assert!(rows[0] >= 60, "top spelling {} rows", rows[0]);
        assert!(rows.iter().filter(|&&n| n == 1).count() * 3 > rows.len());
    }

    #[test]
    fn extended_spellings_never_appear_in_standard() {
        let has_odd = |l: &Listing| {
            let e = l.engine.as_deref().unwrap_or("").to_lowercase();
            let p = l.part_no.as_deref().unwrap_or("");
            e.contains("ltr")
                || e.contains("cyl x")
                || e.contains("non-turbo")
                || p.contains('_')
                || p.contains('.')
        };
        let std = generate(&opts(20_000, 8, Variants::Standard));
        assert!(!std.listings.iter().any(has_odd));
        let ext = generate(&opts(20_000, 8, Variants::Extended));
        assert!(ext.listings.iter().filter(|l| has_odd(l)).count() > 500);
    }

    #[test]
    fn typos_keep_the_intended_truth() {
        let clean = "4 cyl turbo diesel 4.5L";
        let typed = misspell(clean, 7).unwrap();
        assert_ne!(typed, clean);
        assert!(typed.len() + 1 >= clean.len());
    }

    #[test]
    fn csv_fields_are_quoted_when_needed() {
        assert_eq!(csv_field("6 spd"), "6 spd");
        assert_eq!(csv_field("a,b"), "\"a,b\"");
        assert_eq!(csv_field("say \"hi\""), "\"say \"\"hi\"\"\"");
        assert_eq!(csv_field(" x"), "\" x\"");
        assert_eq!(csv_field(""), "\"\"");
        assert_eq!(cell(None), "");
    }

    #[test]
    fn title_case_leaves_units_after_digits_alone() {
        assert_eq!(
            title_case("4 cyl turbo diesel 4.5L"),
            "4 Cyl Turbo Diesel 4.5l"
        );
        assert_eq!(
            title_case("infinitely variable (CVT)"),
            "Infinitely Variable (Cvt)"
        );
    }

    #[test]
    fn number_words() {
        assert_eq!(number_word(6).as_deref(), Some("six"));
        assert_eq!(number_word(24).as_deref(), Some("twenty-four"));
        assert_eq!(number_word(40).as_deref(), Some("forty"));
        assert_eq!(number_word(50), None);
    }

    /// Writes the committed sample: `cargo test --lib sample -- --ignored`.
    #[test]
    #[ignore]
    fn write_committed_sample() {
        let out = Path::new(env!("CARGO_MANIFEST_DIR")).join("samples");
        write_sample(&out, &SampleOptions::default()).unwrap();
    }
}
