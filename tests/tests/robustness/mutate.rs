//! The mutations the fuzz tests apply to project files (seeded, so a
//! failing case replays from its seed).

use super::*;

pub(super) const HOSTILE_NUMBERS: [&str; 16] = [
    "NaN",
    "inf",
    "-inf",
    "1e308",
    "-1e308",
    "1e999",
    "-1",
    "0",
    "0.0",
    "-0.0",
    "1e-300",
    "4294967295",
    "4294967296",
    "18446744073709551616",
    "-9223372036854775809",
    "123456789012345678901234567890.5",
];

const ID_KEYS: [&str; 5] = ["id: ", "a: ", "b: ", "level: ", "outlets: "];

fn lines_of(text: &str) -> Vec<&str> {
    text.split_inclusive('\n').collect()
}

/// One random change to the text.
#[allow(clippy::too_many_lines)] // reason: one arm per mutation kind
pub(super) fn mutate(text: &str, rng: &mut Rng) -> String {
    let len = text.len().max(1);
    match rng.below(12) {
        // Flip a byte (to an interesting character or any byte).
        0 => {
            let mut bytes = text.as_bytes().to_vec();
            if bytes.is_empty() {
                return String::new();
            }
            let at = rng.below(bytes.len());
            let special = b"()[]{},:\"-.e0123456789NaSomeNone \n/\\";
            bytes[at] = if rng.unit() < 0.7 { *rng.pick(special) } else { (rng.0.next_u64() & 0xff) as u8 };
            String::from_utf8_lossy(&bytes).into_owned()
        }
        // Truncate at a random point.
        1 => {
            let mut at = rng.below(len);
            while !text.is_char_boundary(at) {
                at -= 1;
            }
            text[..at].to_owned()
        }
        // Duplicate a line.
        2 => {
            let mut ls = lines_of(text);
            if ls.is_empty() {
                return text.to_owned();
            }
            let i = rng.below(ls.len());
            ls.insert(i, ls[i]);
            ls.concat()
        }
        // Remove a line.
        3 => {
            let mut ls = lines_of(text);
            if ls.is_empty() {
                return text.to_owned();
            }
            ls.remove(rng.below(ls.len()));
            ls.concat()
        }
        // Swap two lines.
        4 => {
            let mut ls = lines_of(text);
            if ls.len() < 2 {
                return text.to_owned();
            }
            let (i, j) = (rng.below(ls.len()), rng.below(ls.len()));
            ls.swap(i, j);
            ls.concat()
        }
        // Replace a number by a hostile one (three quarters of the time a
        // float, where validation has to catch NaN/inf/huge).
        5..=7 => {
            let toks = number_tokens(text);
            let floats: Vec<_> = toks.iter().filter(|t| t.2).copied().collect();
            let pool = if !floats.is_empty() && rng.unit() < 0.75 { floats } else { toks };
            if pool.is_empty() {
                return text.to_owned();
            }
            let (s, e, _) = *rng.pick(&pool);
            format!("{}{}{}", &text[..s], rng.pick(&HOSTILE_NUMBERS), &text[e..])
        }
        // Replace an id or a reference by a dangling/duplicate/extreme one.
        8 => {
            let key = *rng.pick(&ID_KEYS);
            let hits: Vec<usize> = text.match_indices(key).map(|(i, _)| i + key.len()).collect();
            if hits.is_empty() {
                return text.to_owned();
            }
            let s = *rng.pick(&hits);
            let e = s + text[s..].bytes().take_while(u8::is_ascii_digit).count();
            let new = match rng.below(4) {
                0 => "0".to_owned(),
                1 => "4294967295".to_owned(),
                2 => "999999".to_owned(),
                _ => rng.below(40).to_string(),
            };
            format!("{}{new}{}", &text[..s], &text[e..])
        }
        // Deep nesting at a random point (sometimes closed again).
        9 => {
            let depth = *rng.pick(&[10usize, 200, 100_000]);
            let (open, close) = *rng.pick(&[("(", ")"), ("[", "]"), ("{", "}"), ("Some(", ")")]);
            let mut at = rng.below(len);
            while !text.is_char_boundary(at) {
                at -= 1;
            }
            let closing = if rng.unit() < 0.5 { close.repeat(depth) } else { String::new() };
            format!("{}{}{}{}", &text[..at], open.repeat(depth), closing, &text[at..])
        }
        // Delete a random span.
        10 => {
            let mut a = rng.below(len);
            let mut b = (a + 1 + rng.below(200)).min(text.len());
            while !text.is_char_boundary(a) {
                a -= 1;
            }
            while !text.is_char_boundary(b) {
                b -= 1;
            }
            format!("{}{}", &text[..a], &text[b..])
        }
        // Copy a block of lines elsewhere (duplicate nodes and runs).
        _ => {
            let ls = lines_of(text);
            if ls.len() < 2 {
                return text.to_owned();
            }
            let i = rng.below(ls.len());
            let n = 1 + rng.below(30);
            let block: Vec<&str> = ls[i..(i + n).min(ls.len())].to_vec();
            let mut out = ls.clone();
            let at = rng.below(out.len());
            for (k, l) in block.into_iter().enumerate() {
                out.insert(at + k, l);
            }
            out.concat()
        }
    }
}

pub(super) fn seed_texts() -> Vec<(String, String)> {
    let mut seeds = demo_texts();
    seeds.push(("every-field".to_owned(), every_field_project().to_ron().unwrap()));
    for (i, spec) in [
        BuildingSpec::new(1, 3),
        BuildingSpec { reverse_return: true, seed: 5, ..BuildingSpec::new(2, 4) },
        BuildingSpec { headers: true, seed: 9, ..BuildingSpec::new(2, 10) },
    ]
    .iter()
    .enumerate()
    {
        seeds.push((format!("generated-{i}"), generate_building(spec).unwrap().to_ron().unwrap()));
    }
    seeds
}
