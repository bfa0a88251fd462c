//! Stage kinds as data: the registry, the kind's parts in the pane and the
//! netlist, and the spread's corners beyond 2^10.

use crate::support::stages::{in_range, plain};

use loopwright::model::params::{param, set_topology};
use loopwright::model::scenario::Spread;
use loopwright::model::stages::{kind, KINDS};
use loopwright::model::Topology;
use loopwright::study::spread::{corner_knobs, knobs};

/// Every topology a file can name has exactly one kind, in the same order.
#[test]
fn every_topology_has_its_kind() {
    assert_eq!(KINDS.len(), Topology::ALL.len());
    for (k, t) in KINDS.iter().zip(Topology::ALL) {
        assert_eq!(k.topology, t);
        assert_eq!(kind(t).topology, t);
    }
}

/// The pane shows the parts a kind declares: a follower has no rg
/// (common practice: a unity-gain buffer is the + input and a wire).
#[test]
fn the_pane_shows_the_kinds_parts() {
    let rg = param("stage.rg").unwrap();
    let s = plain(Topology::Inverting, 1.0e3, 10.0e3);
    assert!(rg.applies(&s));
    let mut f = s.clone();
    set_topology(&mut f, Topology::Follower);
    assert!(!rg.applies(&f));
}

/// Switching kind keeps the values of the parts both kinds have.
#[test]
fn switching_kind_keeps_shared_parts() {
    let mut s = plain(Topology::NonInverting, 2.2e3, 47.0e3);
    s.stage.riso = Some(33.0);
    set_topology(&mut s, Topology::Inverting);
    assert_eq!(s.stage.rg, Some(2.2e3));
    assert_eq!(s.stage.rf, Some(47.0e3));
    assert_eq!(s.stage.riso, Some(33.0));
    assert_eq!(s.nominal_gain(), -47.0e3 / 2.2e3); // textbook: −rf/rg
}

/// Beyond the corner limit the corners keep the parts with the largest
/// first-order effect on the gain. Textbook: the non-inverting gain
/// 1 + rf/rg depends on rg and rf alone at DC, apart from the loop gain's
/// 1/a0 share; riso with no load and ro carry no DC current, so with a
/// limit of 2 the corners must keep rg and rf.
#[test]
fn corners_beyond_the_limit_keep_the_largest_effects() {
    let mut s = in_range(plain(Topology::NonInverting, 1.0e3, 10.0e3));
    s.load.r = None;
    s.load.c = None;
    s.stage.riso = Some(47.0);
    s.stage.tolerance = 0.01;
    s.spread = Some(Spread {
        gbw_tol: Some(0.3),
        ro_tol: Some(0.3),
        ..Spread::default()
    });
    let k = knobs(&s);
    let fields: Vec<&str> = k.iter().map(|k| k.field).collect();
    assert!(fields.len() >= 4, "{fields:?}");
    let kept: Vec<&str> = corner_knobs(&s, &k, 2)
        .iter()
        .map(|&i| k[i].field)
        .collect();
    assert_eq!(kept, ["stage.rg", "stage.rf"]);
    // Within the limit every knob is a corner.
    assert_eq!(corner_knobs(&s, &k, 10).len(), k.len());
}
