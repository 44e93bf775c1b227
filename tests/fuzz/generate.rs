//! Input generators: grammar-based generation from the formats' own keys
//! and shapes, and mutation of real seeds (the shipped rulesets, the
//! reference's complete example). All draw from one seeded generator, so a
//! seed gives the same inputs every time.

use rand::seq::SliceRandom;
use rand::Rng;
use rand_chacha::ChaCha8Rng;

pub type Rng8 = ChaCha8Rng;

fn pick<T: Clone>(rng: &mut Rng8, items: &[T]) -> T {
    items.choose(rng).expect("non-empty").clone()
}

// ---------------------------------------------------------------- text pieces

/// Odd Unicode: direction marks, joiners, combining marks, full-width and
/// compatibility characters NFKC rewrites, a fraction NFKC expands, a
/// character that lower-cases to two, primes, the replacement character.
const ODD: &[&str] = &[
    "\u{200f}",
    "\u{202e}",
    "\u{200d}",
    "\u{feff}",
    "\u{301}",
    "e\u{301}",
    "\u{fb01}",
    "\u{bd}",
    "\u{2044}",
    "\u{2033}",
    "\u{2032}",
    "\u{130}",
    "\u{df}",
    "\u{1e9e}",
    "\u{ff13}",
    "\u{ff44}",
    "\u{3000}",
    "\u{a0}",
    "\u{2028}",
    "\u{85}",
    "\u{fffd}",
    "\u{10ffff}",
    "\u{1f600}",
    "\u{663}",
    "\u{2460}",
    "\u{2167}",
    "\u{33a5}",
    "\u{2126}",
    "\u{212b}",
    "\u{fdfa}",
    "\u{1d7d8}",
];
const CONTROL: &[&str] = &[
    "\0", "\u{1}", "\u{7}", "\u{8}", "\t", "\n", "\r", "\u{b}", "\u{c}", "\u{1b}", "\u{7f}",
    "\u{9f}",
];
const WORDS: &[&str] = &[
    "turbo",
    "auto",
    "manual",
    "cvt",
    "spd",
    "speed",
    "cyl",
    "v8",
    "diesel",
    "gas",
    "l",
    "cc",
    "hp",
    "kw",
    "in",
    "ft",
    "n/a",
    "unknown",
    "-",
    "?",
    "tbd",
    "x",
    "non-turbo",
    "no",
    "w/o",
    "t/c",
    "4wd",
    "awd",
];
const NUMBER_WORDS: &[&str] = &[
    "zero",
    "one",
    "six",
    "Twelve",
    "seventeen",
    "thirty-two",
    "thirty two",
    "ninety-nine",
    "twentyone",
    "twenty-zero",
    "seventy",
    "eighteen",
    "TEN",
    "hundred",
    "fortyfour",
    "Sixty-Six",
];

fn digits(rng: &mut Rng8, len: usize) -> String {
    (0..len)
        .map(|_| char::from(b'0' + rng.gen_range(0..10)))
        .collect()
}

fn some_digits(rng: &mut Rng8, len: std::ops::Range<usize>) -> String {
    let len = rng.gen_range(len);
    digits(rng, len)
}

fn digit_run(rng: &mut Rng8) -> String {
    let len = match rng.gen_range(0..20) {
        0 => rng.gen_range(16..30),
        1 => rng.gen_range(300..420),
        _ => rng.gen_range(1..4),
    };
    digits(rng, len)
}

/// A number in one of the shapes the macros read, or one that is almost
/// such a shape.
pub fn number_text(rng: &mut Rng8) -> String {
    let sep = pick(rng, &[",", ".", " ", "\u{a0}", "'", "_"]);
    let slash = pick(rng, &["/", "\u{2044}", "/", "\\"]);
    match rng.gen_range(0..14) {
        0 => digit_run(rng),
        1 => {
            let groups = rng.gen_range(1..8);
            let mut s = some_digits(rng, 1..4);
            for _ in 0..groups {
                s.push_str(sep);
                let len = if rng.gen_bool(0.85) {
                    3
                } else {
                    rng.gen_range(0..5)
                };
                s.push_str(&digits(rng, len));
            }
            s
        }
        2 => format!(
            "{}{}{}",
            digit_run(rng),
            pick(rng, &[".", ","]),
            digit_run(rng)
        ),
        3 => format!("{}{}", pick(rng, &[".", ","]), digit_run(rng)),
        4 => format!(
            "{}{slash}{}",
            some_digits(rng, 1..4),
            some_digits(rng, 1..4)
        ),
        5 => format!(
            "{}{}{}{slash}{}",
            digit_run(rng),
            pick(rng, &["-", " ", "  ", "--"]),
            some_digits(rng, 1..3),
            some_digits(rng, 1..3)
        ),
        6 => pick(rng, NUMBER_WORDS).to_string(),
        7 => pick(
            rng,
            &[
                "inf", "NaN", "1e5", "1e400", "-3", "+4", "0x1f", "1_000", "−5", "١٢", "４.５",
            ],
        )
        .to_string(),
        8 => format!("{}{slash}0", some_digits(rng, 1..3)),
        9 => format!("{} {}", some_digits(rng, 1..4), number_text(rng)),
        10 => format!(
            "{}{}{}",
            number_text(rng),
            pick(rng, &["", ".", ",", "/", "-", " "]),
            number_text(rng)
        ),
        11 => {
            let d = rng.gen_range(1..70u32);
            let n = rng.gen_range(0..d + 3);
            format!("{n}{slash}{d}")
        }
        12 => format!(
            "{}{}",
            pick(rng, &[" ", "\t", "\u{3000}", ""]),
            number_text(rng)
        ),
        _ => some_digits(rng, 1..5),
    }
}

/// Characters from every alphabet a number's text mixes.
pub fn number_noise(rng: &mut Rng8) -> String {
    let alphabet: &[&str] = &[
        "0", "1", "7", "9", ",", ".", " ", "-", "/", "\u{2044}", "e", "+", "\u{a0}", "x",
        "\u{ff15}",
    ];
    (0..rng.gen_range(0..12))
        .map(|_| pick(rng, alphabet))
        .collect()
}

/// One input for the `numbers` target.
pub fn number_input(rng: &mut Rng8) -> String {
    let mut s = if rng.gen_bool(0.8) {
        number_text(rng)
    } else {
        number_noise(rng)
    };
    if rng.gen_bool(0.2) {
        mutate_text(rng, &mut s, 1);
    }
    s
}

/// A value a column might hold: words, numbers with units, odd characters.
pub fn value_text(rng: &mut Rng8, words: &[String]) -> String {
    let parts = rng.gen_range(0..7);
    let mut s = String::new();
    for _ in 0..parts {
        let piece = match rng.gen_range(0..12) {
            0..=2 => number_text(rng),
            3 | 4 if !words.is_empty() => pick(rng, words).clone(),
            3..=5 => pick(rng, WORDS).to_string(),
            6 => pick(rng, ODD).to_string(),
            7 => pick(rng, CONTROL).to_string(),
            8 => format!(
                "{}{}",
                number_text(rng),
                pick(
                    rng,
                    &["l", "cc", "hp", "kw", "\"", "'", "ft", "in", "v", "-speed", "cyl"]
                )
            ),
            9 => pick(rng, NUMBER_WORDS).to_string(),
            10 if rng.gen_bool(0.1) => "a".repeat(rng.gen_range(1000..20000)),
            _ => pick(rng, &[" ", "  ", "-", "/", ",", "(", ")", "\u{2033}"]).to_string(),
        };
        s.push_str(&piece);
        if rng.gen_bool(0.7) {
            s.push(' ');
        }
    }
    s
}

/// A hostile string for a TOML value: words, odd Unicode, control
/// characters, regex syntax, macros.
fn hostile_text(rng: &mut Rng8) -> String {
    match rng.gen_range(0..10) {
        0 => String::new(),
        1 => " ".repeat(rng.gen_range(1..4)),
        2 => pick(rng, ODD).to_string(),
        3 => pick(rng, CONTROL).to_string(),
        4 => pick(
            rng,
            &[
                "{int}", "{num}", "{count}", "(", ")", "[", "|", "\\", ".*", "\\d", "{1000}",
                "(?=x)",
            ],
        )
        .to_string(),
        5 => format!("{}{}", pick(rng, WORDS), pick(rng, ODD)),
        6 => "w".repeat(rng.gen_range(100..5000)),
        _ => pick(rng, WORDS).to_string(),
    }
}

// ---------------------------------------------------------------- TOML writing

/// A TOML string literal for `s`, in one of TOML's four string forms; a
/// form that cannot hold `s` is used now and then all the same.
fn toml_str(rng: &mut Rng8, s: &str) -> String {
    let basic = || {
        let mut out = String::from("\"");
        for c in s.chars() {
            match c {
                '"' => out.push_str("\\\""),
                '\\' => out.push_str("\\\\"),
                '\n' => out.push_str("\\n"),
                '\t' => out.push_str("\\t"),
                c if c.is_control() => out.push_str(&format!("\\u{:04X}", c as u32)),
                c => out.push(c),
            }
        }
        out.push('"');
        out
    };
    match rng.gen_range(0..20) {
        0 => format!("\"{s}\""),
        1 => format!("'''{s}'''"),
        2 => format!(
            "\"\"\"{}\"\"\"",
            s.replace('\\', "\\\\").replace('"', "\\\"")
        ),
        _ if !s.contains(['\'', '\n', '\r']) && !s.chars().any(|c| c.is_control() && c != '\t') => {
            format!("'{s}'")
        }
        _ => basic(),
    }
}

fn toml_list(rng: &mut Rng8, items: &[String]) -> String {
    let parts: Vec<String> = items.iter().map(|s| toml_str(rng, s)).collect();
    let sep = if rng.gen_bool(0.2) { ",\n  " } else { ", " };
    format!("[{}]", parts.join(sep))
}

fn word_list(rng: &mut Rng8) -> Vec<String> {
    let len = match rng.gen_range(0..30) {
        0 => 0,
        1 => rng.gen_range(1000..5000),
        _ => rng.gen_range(1..6),
    };
    (0..len)
        .map(|i| {
            if len > 100 {
                format!("w{i}{}", pick(rng, &["", "x", "\u{301}", "-", " "]))
            } else {
                hostile_text(rng)
            }
        })
        .collect()
}

fn float_text(rng: &mut Rng8) -> String {
    pick(
        rng,
        &[
            "1",
            "0",
            "-1",
            "0.001",
            "12",
            "1e308",
            "1e-308",
            "5e-324",
            "nan",
            "inf",
            "-inf",
            "+nan",
            "1.7976931348623157e308",
            "2.5",
            "1_000",
            "0x10",
            "1e400",
            "-0.0",
            "3.4e38",
            "3.5e38",
        ],
    )
    .to_string()
}

fn int_text(rng: &mut Rng8) -> String {
    pick(
        rng,
        &[
            "0",
            "1",
            "4",
            "-1",
            "16",
            "255",
            "256",
            "-129",
            "65535",
            "2147483647",
            "9223372036854775807",
            "-9223372036854775808",
            "9223372036854775808",
            "1_000",
            "0x7f",
            "1.5",
            "\"3\"",
        ],
    )
    .to_string()
}

/// A regular expression from a small grammar: alternation, groups of
/// every kind (deeply nested now and then), classes, repetitions (huge and
/// reversed ones too), the number macros, escapes and fancy syntax.
pub fn pattern_text(rng: &mut Rng8, depth: u32) -> String {
    if rng.gen_range(0..200) == 0 {
        let n = pick(rng, &[100usize, 260, 1000, 20000]);
        let inner = pick(rng, &["({int})", "x", "{num}", ""]);
        let open = pick(rng, &["(", "(?:", "(?=", "(?<n>"]);
        return format!("{}{inner}{}", open.repeat(n), ")".repeat(n));
    }
    let atoms = rng.gen_range(1..5);
    let mut s = String::new();
    for _ in 0..atoms {
        let atom = match rng.gen_range(0..22) {
            0..=2 => pick(
                rng,
                &[
                    "({int})",
                    "({num})",
                    "({count})",
                    "{int}",
                    "{num}",
                    "{count}",
                ],
            )
            .to_string(),
            3 | 4 => pick(rng, WORDS).to_string(),
            5 => pick(
                rng,
                &[
                    "\\s*", "\\s?", "-?", "\\b", "^", "$", ".", "\\d+", "\\w+", "[a-z]", "[^ ]",
                    "\\p{L}", "\\pN",
                ],
            )
            .to_string(),
            6 if depth < 4 => format!("({})", pattern_text(rng, depth + 1)),
            7 if depth < 4 => format!("(?:{})", pattern_text(rng, depth + 1)),
            8 if depth < 4 => format!(
                "({}|{})",
                pattern_text(rng, depth + 1),
                pattern_text(rng, depth + 1)
            ),
            9 => pick(
                rng,
                &[
                    "{1000}",
                    "{5,2}",
                    "{0}",
                    "{99999}",
                    "{1,65536}",
                    "{,3}",
                    "{3,}",
                    "*",
                    "+?",
                    "??",
                    "**",
                    "{",
                ],
            )
            .to_string(),
            10 => pick(
                rng,
                &[
                    "[z-a]",
                    "[]",
                    "[^]",
                    "[\\d-x]",
                    "(",
                    ")",
                    "|",
                    "\\",
                    "\\1",
                    "(?=x)",
                    "(?<!y)",
                    "(?>a)",
                    "(?i)",
                    "(?-u:\\xff)",
                ],
            )
            .to_string(),
            11 => pick(
                rng,
                &[
                    "\\{int}",
                    "\\\\{int}",
                    "{in",
                    "t}",
                    "{INT}",
                    "{ int }",
                    "{num}{num}",
                    "{count}+",
                ],
            )
            .to_string(),
            12 => pick(rng, ODD).to_string(),
            13 => format!(
                "(?P<{}>{})",
                pick(rng, &["n", "x1", "unit", "n"]),
                pick(rng, &["{num}", "l|cc", ""])
            ),
            14 => pick(rng, &["(l|cc|hp)", "(in|ft|\"|')", "(kw)?", "(?:v\\b|/|-)"]).to_string(),
            15 => pick(
                rng,
                &[
                    "\\x{110000}",
                    "\\u{d800}",
                    "\\p{Greek}",
                    "\\p{Nope}",
                    "[[:alpha:]]",
                    "\\Q",
                ],
            )
            .to_string(),
            _ => pick(rng, &["\\s*", " ", "x", "-", "/"]).to_string(),
        };
        s.push_str(&atom);
    }
    s
}

fn pattern_value(rng: &mut Rng8) -> String {
    pattern_text(rng, 0)
}

/// A ruleset built from the format's keys.
pub fn ruleset_text(rng: &mut Rng8) -> String {
    let mut out = String::new();
    let line = |out: &mut String, key: &str, value: String| {
        out.push_str(key);
        out.push_str(" = ");
        out.push_str(&value);
        out.push('\n');
    };
    if rng.gen_bool(0.5) {
        let column = hostile_text(rng);
        line(&mut out, "column", toml_str(rng, &column));
    }
    if rng.gen_bool(0.4) {
        let prefix = hostile_text(rng);
        line(&mut out, "prefix", toml_str(rng, &prefix));
    }
    if rng.gen_bool(0.3) {
        let mark = pick(rng, &["\".\"", "\",\"", "\";\"", "\"\"", "1"]).to_string();
        line(&mut out, "decimal", mark);
    }
    if rng.gen_bool(0.2) {
        let d = hostile_text(rng);
        line(&mut out, "description", toml_str(rng, &d));
    }
    if rng.gen_bool(0.3) {
        let mut list = word_list(rng);
        list.extend(
            ["n/a", "-", "?", ""]
                .iter()
                .filter(|_| rng.gen_bool(0.3))
                .map(|s| s.to_string()),
        );
        line(&mut out, "placeholders", toml_list(rng, &list));
    }
    if rng.gen_bool(0.25) {
        let p = pattern_value(rng);
        line(&mut out, "placeholder_pattern", toml_str(rng, &p));
    }
    if rng.gen_bool(0.05) {
        out.push_str("column = \"again\"\n");
    }
    if rng.gen_bool(0.3) {
        out.push_str("\n[normalize]\n");
        let options: &[(&str, &[&str])] = &[
            (
                "unicode",
                &["\"nfkc\"", "\"nfc\"", "\"none\"", "\"nfd\"", "true"],
            ),
            ("case", &["\"lower\"", "\"none\"", "\"upper\""]),
            ("trim", &["true", "false", "\"yes\""]),
            ("collapse_space", &["true", "false"]),
            ("strip_accents", &["true", "false"]),
            ("stem", &["true"]),
        ];
        for (key, values) in options {
            if rng.gen_bool(0.5) {
                let v = pick(rng, values).to_string();
                line(&mut out, key, v);
            }
        }
    }
    let mut names: Vec<String> = Vec::new();
    let mut labels: Vec<String> = Vec::new();
    for _ in 0..rng.gen_range(0..7) {
        let name = if rng.gen_bool(0.85) {
            format!(
                "{}{}",
                pick(rng, &["f", "gears", "turbo", "size", "kind", ""]),
                rng.gen_range(0..4)
            )
        } else {
            hostile_text(rng)
        };
        names.push(name.clone());
        let kind = rng.gen_range(0..4);
        out.push_str(&format!(
            "\n[[{}]]\n",
            ["flag", "count", "measure", "label"][kind]
        ));
        if rng.gen_bool(0.97) {
            line(&mut out, "name", toml_str(rng, &name));
        }
        if rng.gen_bool(0.1) {
            let d = hostile_text(rng);
            line(&mut out, "description", toml_str(rng, &d));
        }
        match kind {
            0 => {
                matcher_keys(rng, &mut out);
                unless_keys(rng, &mut out);
            }
            1 | 2 => {
                if rng.gen_bool(0.95) {
                    let p = pattern_value(rng);
                    line(&mut out, "pattern", toml_str(rng, &p));
                }
                if rng.gen_bool(0.15) {
                    line(&mut out, "fancy", "true".into());
                }
                if kind == 1 {
                    if rng.gen_bool(0.4) {
                        let range = format!("[{}, {}]", int_text(rng), int_text(rng));
                        line(&mut out, "range", range);
                    }
                    if rng.gen_bool(0.2) {
                        let m = int_text(rng);
                        line(&mut out, "missing", m);
                    }
                } else {
                    measure_keys(rng, &mut out, &line);
                }
                unless_keys(rng, &mut out);
            }
            _ => label_keys(rng, &mut out, &mut labels),
        }
        if rng.gen_bool(0.03) {
            line(&mut out, "name", "\"twice\"".into());
        }
        if rng.gen_bool(0.02) {
            line(&mut out, "rnage", "[1, 2]".into());
        }
    }
    for _ in 0..rng.gen_range(0..3) {
        out.push_str("\n[[example]]\n");
        let value = value_text(rng, &[]);
        line(&mut out, "value", toml_str(rng, &value));
        let mut expect = Vec::new();
        for _ in 0..rng.gen_range(0..4) {
            let key = if names.is_empty() || rng.gen_bool(0.1) {
                "nope".to_owned()
            } else {
                pick(rng, &names).clone()
            };
            let value = match rng.gen_range(0..5) {
                0 => pick(rng, &["true", "false"]).to_string(),
                1 => int_text(rng),
                2 => float_text(rng),
                3 if !labels.is_empty() => {
                    let l = pick(rng, &labels).clone();
                    toml_str(rng, &l)
                }
                _ => "\"x\"".to_owned(),
            };
            expect.push(format!("{} = {value}", toml_str(rng, &key)));
        }
        line(&mut out, "expect", format!("{{ {} }}", expect.join(", ")));
    }
    if rng.gen_bool(0.02) {
        let depth = pick(rng, &[100usize, 1000, 100_000]);
        out.push_str(&format!(
            "\ndeep = {}{}\n",
            "[".repeat(depth),
            "]".repeat(depth)
        ));
    }
    out
}

fn matcher_keys(rng: &mut Rng8, out: &mut String) {
    let (any, pattern) = match rng.gen_range(0..10) {
        0 => (true, true),
        1 => (false, false),
        2..=5 => (true, false),
        _ => (false, true),
    };
    if any {
        let words = word_list(rng);
        out.push_str(&format!("any = {}\n", toml_list(rng, &words)));
    }
    if pattern {
        let p = pattern_value(rng);
        out.push_str(&format!("pattern = {}\n", toml_str(rng, &p)));
        if rng.gen_bool(0.25) {
            out.push_str("fancy = true\n");
        }
    }
}

fn unless_keys(rng: &mut Rng8, out: &mut String) {
    if rng.gen_bool(0.2) {
        let words = word_list(rng);
        out.push_str(&format!("unless_any = {}\n", toml_list(rng, &words)));
    }
    if rng.gen_bool(0.15) {
        let p = pattern_value(rng);
        out.push_str(&format!("unless_pattern = {}\n", toml_str(rng, &p)));
    }
}

fn measure_keys(rng: &mut Rng8, out: &mut String, line: &impl Fn(&mut String, &str, String)) {
    if rng.gen_bool(0.9) {
        let unit = pick(rng, &["l", "hp", "in", "v", "", " ", "L", "cc."]).to_string();
        line(out, "unit", toml_str(rng, &unit));
    }
    if rng.gen_bool(0.7) {
        let mut entries = Vec::new();
        let count = if rng.gen_bool(0.05) {
            2000
        } else {
            rng.gen_range(0..5)
        };
        for i in 0..count {
            let spelling = if count > 100 {
                format!("u{i}")
            } else {
                pick(
                    rng,
                    &[
                        "l",
                        "L",
                        "cc",
                        "cc.",
                        "hp",
                        "kw",
                        "mW",
                        "MW",
                        "\"",
                        "'",
                        "\u{2033}",
                        "\u{2032}\u{2032}",
                        "",
                        " l",
                        "in",
                    ],
                )
                .to_string()
            };
            entries.push(format!(
                "{} = {}",
                toml_str(rng, &spelling),
                float_text(rng)
            ));
        }
        line(out, "units", format!("{{ {} }}", entries.join(", ")));
    }
    if rng.gen_bool(0.2) {
        let p = pick(rng, &["\"f32\"", "\"f64\"", "\"f16\""]).to_string();
        line(out, "precision", p);
    }
    if rng.gen_bool(0.3) {
        let c = pick(
            rng,
            &["\"first\"", "\"sum\"", "\"min\"", "\"max\"", "\"mean\""],
        )
        .to_string();
        line(out, "combine", c);
    }
    if rng.gen_bool(0.3) {
        let range = format!("[{}, {}]", float_text(rng), float_text(rng));
        line(out, "range", range);
    }
    if rng.gen_bool(0.2) {
        let m = float_text(rng);
        line(out, "missing", m);
    }
}

fn label_keys(rng: &mut Rng8, out: &mut String, labels: &mut Vec<String>) {
    let mut mine: Vec<String> = (0..rng.gen_range(0..4))
        .map(|_| {
            if rng.gen_bool(0.8) {
                pick(rng, &["diesel", "gas", "lpg", "x", "Diesel"]).to_string()
            } else {
                hostile_text(rng)
            }
        })
        .collect();
    if rng.gen_bool(0.3) {
        let d = mine.first().cloned().unwrap_or_else(|| hostile_text(rng));
        out.push_str(&format!("default = {}\n", toml_str(rng, &d)));
    }
    if rng.gen_bool(0.3) {
        let mut cats = mine.clone();
        if rng.gen_bool(0.3) {
            cats.pop();
        }
        if rng.gen_bool(0.2) {
            cats.extend(cats.clone());
        }
        out.push_str(&format!("categories = {}\n", toml_list(rng, &cats)));
    }
    if rng.gen_bool(0.4) {
        let entries: Vec<String> = (0..rng.gen_range(0..4))
            .map(|_| {
                let key = pick(rng, &["dsl", "DSL", "d s l", "", "\u{fb01}", "fi"]).to_string();
                let value = if mine.is_empty() {
                    "x".to_owned()
                } else {
                    pick(rng, &mine).clone()
                };
                format!("{} = {}", toml_str(rng, &key), toml_str(rng, &value))
            })
            .collect();
        out.push_str(&format!("map = {{ {} }}\n", entries.join(", ")));
    }
    for _ in 0..rng.gen_range(0..4) {
        out.push_str("[[label.case]]\n");
        if rng.gen_bool(0.95) {
            let label = if mine.is_empty() || rng.gen_bool(0.2) {
                hostile_text(rng)
            } else {
                pick(rng, &mine).clone()
            };
            out.push_str(&format!("label = {}\n", toml_str(rng, &label)));
            mine.push(label);
        }
        matcher_keys(rng, out);
        unless_keys(rng, out);
    }
    labels.extend(mine);
}

// ---------------------------------------------------------------- mutation

/// Hostile tokens spliced into seeds.
const TOKENS: &[&str] = &[
    "{num}",
    "{int}",
    "{count}",
    "nan",
    "inf",
    "-inf",
    "1e999",
    "[",
    "]",
    "]]",
    "[[",
    "\"",
    "'",
    "'''",
    "(",
    ")",
    "(?=",
    "{99999}",
    "\\",
    "\u{202e}",
    "\\u0000",
    "=",
    ",",
    "#",
    "\n",
    "[[label.case]]",
    "[[flag]]",
    "[normalize]",
    "unless_any = [\"x\"]",
    "unless_pattern = 'x'",
    "combine = \"sum\"",
    "placeholders = [\"n/a\"]",
    "placeholder_pattern = '-+'",
    "fancy = true",
    "range = [5, 1]",
    "missing = 3",
    "-9223372036854775808",
    "0",
];

/// Change `text` in `rounds` small ways: replace, insert or delete a
/// character, splice a hostile token, duplicate, delete or swap lines.
pub fn mutate_text(rng: &mut Rng8, text: &mut String, rounds: usize) {
    for _ in 0..rounds {
        let at = char_boundary(text, rng.gen_range(0..=text.len()));
        match rng.gen_range(0..9) {
            0 => {
                let end = char_boundary(text, (at + rng.gen_range(1..4)).min(text.len()));
                text.replace_range(at..end, "");
            }
            1 | 2 => text.insert_str(at, pick(rng, TOKENS)),
            3 => text.insert_str(at, pick(rng, ODD)),
            4 => text.insert(at, char::from(rng.gen_range(0x20u8..0x7f))),
            5..=8 => {
                let mut lines: Vec<String> = text.split('\n').map(str::to_owned).collect();
                let i = rng.gen_range(0..lines.len());
                match rng.gen_range(0..4) {
                    0 => {
                        let times = if rng.gen_bool(0.1) { 200 } else { 1 };
                        for _ in 0..times {
                            lines.insert(i, lines[i].clone());
                        }
                    }
                    1 => {
                        lines.remove(i);
                    }
                    2 => {
                        let j = rng.gen_range(0..lines.len());
                        lines.swap(i, j);
                    }
                    _ => {
                        // Replace one value (after `=`) with a token.
                        if let Some(eq) = lines[i].find('=') {
                            lines[i].truncate(eq + 1);
                            lines[i].push(' ');
                            lines[i].push_str(pick(rng, TOKENS));
                        }
                    }
                }
                *text = lines.join("\n");
            }
            _ => unreachable!(),
        }
    }
}

fn char_boundary(s: &str, mut at: usize) -> usize {
    while !s.is_char_boundary(at) {
        at -= 1;
    }
    at
}

/// Byte-level mutation: flip, insert or delete bytes (the result may not
/// be UTF-8).
pub fn mutate_bytes(rng: &mut Rng8, bytes: &mut Vec<u8>, rounds: usize) {
    for _ in 0..rounds {
        let at = rng.gen_range(0..=bytes.len());
        match rng.gen_range(0..6) {
            0 if at < bytes.len() => bytes[at] ^= 1 << rng.gen_range(0..8),
            1 => bytes.insert(
                at,
                pick(
                    rng,
                    &[
                        b'"', b',', b'\n', b'\r', 0xff, 0xc3, 0, b'{', b'}', b'[', b'\\',
                    ],
                ),
            ),
            2 if at < bytes.len() => {
                let end = (at + rng.gen_range(1..8)).min(bytes.len());
                bytes.drain(at..end);
            }
            3 if at < bytes.len() => {
                let end = (at + rng.gen_range(1..40)).min(bytes.len());
                let copy = bytes[at..end].to_vec();
                bytes.splice(at..at, copy);
            }
            _ => bytes.insert(at, rng.gen()),
        }
    }
}

/// A seed changed by text or byte mutation (bytes read back lossily, since
/// a ruleset is text).
pub fn mutated_seed(rng: &mut Rng8, seeds: &[String]) -> String {
    let mut text = pick(rng, seeds).clone();
    let rounds = rng.gen_range(1..6);
    if rng.gen_bool(0.8) {
        mutate_text(rng, &mut text, rounds);
        text
    } else {
        let mut bytes = text.into_bytes();
        mutate_bytes(rng, &mut bytes, rounds);
        String::from_utf8_lossy(&bytes).into_owned()
    }
}

/// Values to evaluate a ruleset on: built from the words the ruleset's
/// text holds, so that its rules fire now and then.
pub fn values_for(rng: &mut Rng8, ruleset: &str) -> Vec<String> {
    let words: Vec<String> = ruleset
        .split(|c: char| !(c.is_alphanumeric() || c == '/' || c == '-'))
        .filter(|w| !w.is_empty() && w.len() < 20)
        .take(200)
        .map(str::to_owned)
        .collect();
    (0..rng.gen_range(3..9))
        .map(|_| value_text(rng, &words))
        .collect()
}

// ---------------------------------------------------------------- tables

/// A field's text, by kind: numbers of every type, booleans, dates, text
/// with quotes, delimiters and line breaks, odd Unicode, invalid UTF-8.
fn field_bytes(rng: &mut Rng8, kind: u32) -> Vec<u8> {
    let text = match kind {
        0 => rng.gen_range(-1000i64..1000).to_string(),
        1 => pick(
            rng,
            &[
                "1.5", "-0.0", "1e308", "1e400", "NaN", "inf", "-inf", "3.14", ".5", "5.", "1_000",
            ],
        )
        .to_string(),
        2 => pick(rng, &["true", "false", "True", "FALSE"]).to_string(),
        3 => pick(
            rng,
            &[
                "2024-01-31",
                "2024-02-30",
                "12:00:00",
                "2024-01-01T00:00:00Z",
                "2024-13-01",
            ],
        )
        .to_string(),
        4 => pick(
            rng,
            &[
                "9223372036854775807",
                "9223372036854775808",
                "-9223372036854775809",
                "18446744073709551616",
                "00042",
            ],
        )
        .to_string(),
        5 => String::new(),
        6 => value_text(rng, &[]),
        7 => format!(
            "a,b{}c\"d\"{}",
            pick(rng, &["\n", "\r\n", "\r", ""]),
            pick(rng, ODD)
        ),
        8 => {
            return {
                let mut b = value_text(rng, &[]).into_bytes();
                b.insert(
                    rng.gen_range(0..=b.len()),
                    pick(rng, &[0xff, 0xc3, 0x80, 0xed]),
                );
                b
            }
        }
        9 if rng.gen_bool(0.05) => "x".repeat(rng.gen_range(100_000..2_000_000)),
        _ => pick(rng, WORDS).to_string(),
    };
    text.into_bytes()
}

/// A header name: plain, empty, spaced, odd Unicode, with quotes or
/// delimiters, very long.
fn header_name(rng: &mut Rng8, i: usize) -> String {
    match rng.gen_range(0..14) {
        0 => String::new(),
        1 => format!(" c{i} "),
        2 => format!("c{i}{}", pick(rng, ODD)),
        3 => format!("c,{i}"),
        4 => format!("c\"{i}"),
        5 => format!("c\n{i}"),
        6 => "h".repeat(rng.gen_range(200..5000)),
        7 => "dup".to_owned(),
        8 => pick(
            rng,
            &[
                "null",
                "NaN",
                "0",
                "1.5",
                "true",
                "column_1",
                "_duplicated_0",
                "#",
                "\u{feff}id",
            ],
        )
        .to_string(),
        _ => format!("c{i}"),
    }
}

fn csv_field(rng: &mut Rng8, bytes: &[u8], delimiter: u8) -> Vec<u8> {
    let needs = bytes
        .iter()
        .any(|&b| b == delimiter || b == b'"' || b == b'\n' || b == b'\r');
    let quote = match rng.gen_range(0..20) {
        0 => false,
        1 | 2 => true,
        _ => needs,
    };
    if !quote {
        return bytes.to_vec();
    }
    let mut out = vec![b'"'];
    for &b in bytes {
        if b == b'"' && rng.gen_range(0..30) != 0 {
            out.push(b'"');
        }
        out.push(b);
    }
    out.push(b'"');
    out
}

/// A CSV table from a model of columns with types (a column may change
/// type after the first rows, as real files do), written with quoting
/// (sometimes missing or wrong), LF/CRLF/CR line ends, BOMs, ragged rows,
/// blank lines; then, now and then, mutated byte by byte.
pub fn csv_table(rng: &mut Rng8) -> Vec<u8> {
    let columns = rng.gen_range(1..6);
    let rows = match rng.gen_range(0..10) {
        0 => 0,
        1 => rng.gen_range(100..3000),
        _ => rng.gen_range(1..30),
    };
    let kinds: Vec<(u32, u32, usize)> = (0..columns)
        .map(|_| {
            let first = rng.gen_range(0..11);
            let later = if rng.gen_bool(0.3) {
                rng.gen_range(0..11)
            } else {
                first
            };
            let switch = if rng.gen_bool(0.5) {
                rng.gen_range(0..rows.max(1))
            } else {
                rng.gen_range(90..2000)
            };
            (first, later, switch)
        })
        .collect();
    let ends: &[&[u8]] = &[b"\n", b"\r\n", b"\r"];
    let uniform = if rng.gen_bool(0.7) {
        Some(pick(rng, &ends[..2]))
    } else {
        None
    };
    let end = |rng: &mut Rng8| uniform.unwrap_or_else(|| pick(rng, ends)).to_vec();
    let mut out = Vec::new();
    if rng.gen_bool(0.1) {
        out.extend_from_slice(b"\xef\xbb\xbf");
    }
    let header: Vec<Vec<u8>> = (0..columns)
        .map(|i| {
            let name = if rng.gen_bool(0.7) {
                format!("c{i}")
            } else {
                header_name(rng, i)
            };
            csv_field(rng, name.as_bytes(), b',')
        })
        .collect();
    out.extend(header.join(&b","[..]));
    out.extend(end(rng));
    for row in 0..rows {
        let mut width = columns;
        if rng.gen_range(0..40) == 0 {
            width = rng.gen_range(0..columns + 3);
        }
        let fields: Vec<Vec<u8>> = (0..width)
            .map(|c| {
                let (first, later, switch) = kinds.get(c).copied().unwrap_or((6, 6, 0));
                let kind = if row < switch { first } else { later };
                let bytes = field_bytes(rng, kind);
                csv_field(rng, &bytes, b',')
            })
            .collect();
        out.extend(fields.join(&b","[..]));
        if row + 1 < rows || rng.gen_bool(0.8) {
            out.extend(end(rng));
        }
        if rng.gen_range(0..60) == 0 {
            out.extend(end(rng));
        }
    }
    if rng.gen_bool(0.2) {
        let rounds = rng.gen_range(1..5);
        mutate_bytes(rng, &mut out, rounds);
    }
    out
}

/// A JSON value of a random type; `depth` bounds ordinary nesting, and now
/// and then a value is nested very deep on purpose.
fn json_value(rng: &mut Rng8, depth: u32) -> String {
    match rng.gen_range(0..16) {
        0 => "null".to_owned(),
        1 => pick(rng, &["true", "false"]).to_string(),
        2 => rng.gen_range(-1000i64..1000).to_string(),
        3 => pick(
            rng,
            &[
                "1.5", "-0.0", "1e308", "1e400", "-1e-400", "3.0", "1E5", "0.1",
            ],
        )
        .to_string(),
        4 => pick(
            rng,
            &[
                "9223372036854775807",
                "9223372036854775808",
                "-9223372036854775809",
                "18446744073709551616",
                "123456789012345678901234567890",
            ],
        )
        .to_string(),
        5 if depth < 3 => {
            let items: Vec<String> = (0..rng.gen_range(0..4))
                .map(|_| json_value(rng, depth + 1))
                .collect();
            format!("[{}]", items.join(","))
        }
        6 if depth < 3 => {
            let items: Vec<String> = (0..rng.gen_range(0..4))
                .map(|i| format!("{}:{}", json_key(rng, i), json_value(rng, depth + 1)))
                .collect();
            format!("{{{}}}", items.join(","))
        }
        7 if rng.gen_bool(0.1) => {
            let n = pick(rng, &[100usize, 1000, 10_000, 100_000]);
            let (open, close) = if rng.gen_bool(0.5) {
                ("[", "]")
            } else {
                ("{\"a\":", "}")
            };
            format!("{}1{}", open.repeat(n), close.repeat(n))
        }
        8 => serde_json::to_string(&format!("{}{}", pick(rng, ODD), value_text(rng, &[])))
            .expect("a string"),
        9 => pick(
            rng,
            &[
                "\"\\u0000\"",
                "\"\\ud800\"",
                "\"\\ud83d\\ude00\"",
                "\"a\\nb\"",
                "\"\\\"\"",
                "\"\"",
                "\"\\/\"",
            ],
        )
        .to_string(),
        10 if rng.gen_bool(0.05) => {
            format!("\"{}\"", "x".repeat(rng.gen_range(100_000..1_000_000)))
        }
        _ => serde_json::to_string(&value_text(rng, &[])).expect("a string"),
    }
}

fn json_key(rng: &mut Rng8, i: usize) -> String {
    let key = match rng.gen_range(0..12) {
        0 => String::new(),
        1 => format!("k{i}{}", pick(rng, ODD)),
        2 => "k0".to_owned(),
        3 => pick(rng, &["a.b", "a\"b", "a\\b", "\n", "0", "null", "\u{0}"]).to_string(),
        4 => "k".repeat(rng.gen_range(200..3000)),
        _ => format!("k{i}"),
    };
    serde_json::to_string(&key).expect("a string")
}

/// NDJSON lines: objects with odd keys and values of every type (a key's
/// type may change after the first lines), deep nesting, lines that are
/// not objects, blank lines, CRLF, BOMs; then, now and then, mutated.
pub fn ndjson_table(rng: &mut Rng8) -> Vec<u8> {
    let rows = match rng.gen_range(0..10) {
        0 => 0,
        1 => rng.gen_range(100..1500),
        _ => rng.gen_range(1..30),
    };
    let keys: Vec<String> = (0..rng.gen_range(1..5))
        .map(|i| {
            if rng.gen_bool(0.7) {
                format!("\"k{i}\"")
            } else {
                json_key(rng, i)
            }
        })
        .collect();
    let string_column = rng.gen_bool(0.5);
    let switch = rng.gen_range(0..rows.max(1) + 200);
    let mut out = Vec::new();
    if rng.gen_bool(0.05) {
        out.extend_from_slice(b"\xef\xbb\xbf");
    }
    for row in 0..rows {
        let line = match rng.gen_range(0..40) {
            0 => pick(
                rng,
                &[
                    "[1,2]",
                    "3",
                    "\"s\"",
                    "null",
                    "{",
                    "{\"k0\":}",
                    "",
                    "   ",
                    "{}",
                ],
            )
            .to_string(),
            _ => {
                let mut fields = Vec::new();
                for (i, key) in keys.iter().enumerate() {
                    if rng.gen_range(0..10) == 0 {
                        continue;
                    }
                    let value = if i == 0 && string_column && row < switch {
                        if rng.gen_bool(0.1) {
                            "null".to_owned()
                        } else {
                            serde_json::to_string(&value_text(rng, &[])).expect("a string")
                        }
                    } else {
                        json_value(rng, 0)
                    };
                    fields.push(format!("{key}:{value}"));
                }
                if rng.gen_range(0..30) == 0 {
                    fields.push(format!("{}:1", keys[0]));
                }
                format!(
                    "{{{}}}",
                    fields.join(if rng.gen_bool(0.1) { " , " } else { "," })
                )
            }
        };
        out.extend_from_slice(line.as_bytes());
        if row + 1 < rows || rng.gen_bool(0.8) {
            out.extend_from_slice(if rng.gen_range(0..15) == 0 {
                b"\r\n"
            } else {
                b"\n"
            });
        }
    }
    if rng.gen_bool(0.2) {
        let rounds = rng.gen_range(1..5);
        mutate_bytes(rng, &mut out, rounds);
    }
    out
}
