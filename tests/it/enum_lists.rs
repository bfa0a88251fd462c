//! Each enumeration's one list (`ALL`, `NAMES`) against what a stage file
//! writes for it: the names serde gives the variants.

use loopwright::model::scenario::{Dist, Topology};
use loopwright::model::Series;

fn written<T: serde::Serialize>(v: &T) -> String {
    ron::to_string(v).unwrap()
}

#[test]
fn enum_lists_name_what_a_stage_file_writes() {
    for (t, name) in Topology::ALL.iter().zip(Topology::NAMES) {
        assert_eq!(written(t), name);
    }
    for (s, name) in Series::ALL.iter().zip(Series::NAMES) {
        assert_eq!(written(s), name);
    }
    for (d, name) in Dist::ALL.iter().zip(Dist::NAMES) {
        assert_eq!(written(d), name);
    }
    // Every name once.
    let mut all: Vec<&str> = Topology::NAMES.to_vec();
    all.extend(Series::NAMES);
    all.extend(Dist::NAMES);
    let n = all.len();
    all.sort();
    all.dedup();
    assert_eq!(all.len(), n);
    assert_eq!(
        Topology::with_resistors(" or "),
        "NonInverting or Inverting or Difference"
    );
}
