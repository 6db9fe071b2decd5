//! Unit tests of the parts list (natural order, CSV, stock lengths).

use super::*;

#[test]
fn options_out_of_range_are_rejected_naming_the_quantity() {
    for bad in [f64::NAN, -0.01, 0.8] {
        let e = PartsOptions { cutting_allowance_fraction: bad }.validate().unwrap_err();
        assert!(e.to_string().contains("cutting allowance"), "{e}");
    }
    assert!(PartsOptions::default().validate().is_ok());
    let p = Project::new("empty");
    let e = parts_list(&p, &Solution::default(), &PartsOptions { cutting_allowance_fraction: -1.0 }).unwrap_err();
    assert!(matches!(e, PhysicsError::OutOfRange { .. }), "{e}");
}

#[test]
fn vessel_sizes_round_up_to_the_next_common_size() {
    assert_eq!(vessel_nominal_size_l(0.5), Some(8.0));
    assert_eq!(vessel_nominal_size_l(8.0), Some(8.0));
    assert_eq!(vessel_nominal_size_l(17.3), Some(18.0));
    assert_eq!(vessel_nominal_size_l(250.0), Some(300.0));
    assert_eq!(vessel_nominal_size_l(301.0), None);
}

#[test]
fn natural_order_compares_numbers() {
    let mut v = vec!["DN25", "DN8", "DN15", "16x2", "DN20 × DN15", "DN20"];
    v.sort_by(|a, b| natural_cmp(a, b));
    assert_eq!(v, ["16x2", "DN8", "DN15", "DN20", "DN20 × DN15", "DN25"]);
}

/// The earlier, allocating implementation: the yardstick of the
/// allocation-free one.
fn natural_cmp_by_chunks(a: &str, b: &str) -> Ordering {
    fn chunks(s: &str) -> Vec<(bool, String)> {
        let mut out: Vec<(bool, String)> = Vec::new();
        for c in s.chars() {
            let d = c.is_ascii_digit();
            match out.last_mut() {
                Some((kind, text)) if *kind == d => text.push(c),
                _ => out.push((d, c.to_string())),
            }
        }
        out
    }
    let (ca, cb) = (chunks(a), chunks(b));
    for ((da, ta), (db, tb)) in ca.iter().zip(&cb) {
        let o = if *da && *db {
            let (na, nb) = (ta.trim_start_matches('0'), tb.trim_start_matches('0'));
            na.len().cmp(&nb.len()).then_with(|| na.cmp(nb))
        } else {
            ta.cmp(tb)
        };
        if o != Ordering::Equal {
            return o;
        }
    }
    ca.len().cmp(&cb.len()).then_with(|| a.cmp(b))
}

#[test]
fn natural_order_agrees_with_the_chunked_definition() {
    let words = [
        "",
        "0",
        "00",
        "007",
        "7",
        "R1",
        "R01",
        "R10",
        "R2",
        "E1.2",
        "E1.10",
        "E1.2a",
        "Room 0.1.10",
        "Room 0.1.9",
        "DN20 × DN15",
        "DN20",
        "16x2",
        "a",
        "A",
        "é3",
        "é12",
        "x",
        "12x",
        "12",
        "1 2",
        "R1 ",
        "R",
    ];
    for a in words {
        for b in words {
            assert_eq!(natural_cmp(a, b), natural_cmp_by_chunks(a, b), "{a:?} vs {b:?}");
        }
    }
}

#[test]
fn csv_round_trips_quotes_commas_and_unicode() {
    let list = PartsList {
        lines: vec![PartLine {
            category: PartCategory::Fitting,
            item: "reducing tee, \"steel\" — supply".to_owned(),
            size: "DN20 × DN15".to_owned(),
            quantity: 12.34,
            unit: PartUnit::Metre,
            serves: vec!["N7".to_owned(), "R3".to_owned()],
            note: "a, b; Δp 5 kPa".to_owned(),
        }],
        options: PartsOptions::default(),
        notes: Vec::new(),
    };
    let text = parts_csv(&list).unwrap();
    assert!(text.starts_with("category,item,size,quantity,unit,serves,note\n"), "{text}");
    assert_eq!(read_parts_csv(&text).unwrap(), list.lines);
    assert!(read_parts_csv("a,b\n1,2\n").is_err());
    let bad = text.replace(",12.34,", ",-1,");
    assert!(read_parts_csv(&bad).is_err());
}

/// Issue 20 item 4: a name that a spreadsheet would run as a formula
/// is written as text, for every leading character that triggers one,
/// and reads back unchanged.
#[test]
fn csv_cells_starting_a_formula_are_neutralised() {
    for lead in crate::csv_cell::FORMULA_TRIGGERS {
        let name = format!("{lead}HYPERLINK(\"http://example.invalid\",\"Header 1\")");
        let list = PartsList {
            lines: vec![PartLine {
                category: PartCategory::Header,
                item: name.clone(),
                size: format!("{lead}DN2"),
                quantity: 1.0,
                unit: PartUnit::Piece,
                serves: vec!["N1".to_owned()],
                note: name.clone(),
            }],
            options: PartsOptions::default(),
            notes: Vec::new(),
        };
        let text = parts_csv(&list).unwrap();
        let mut r = csv::Reader::from_reader(text.as_bytes());
        let row = r.records().next().unwrap().unwrap();
        for k in [1, 2, 6] {
            let cell = row.get(k).unwrap();
            assert!(cell.starts_with('\''), "{lead:?}: column {k} is {cell:?}");
        }
        assert_eq!(read_parts_csv(&text).unwrap(), list.lines, "{lead:?}");
    }
}

#[test]
fn stock_lengths_follow_the_material() {
    assert_eq!(stock_length_m(PipeMaterial::Steel), Some(6.0));
    assert_eq!(stock_length_m(PipeMaterial::PeX), None);
}
