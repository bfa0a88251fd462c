//! The frequency cursor: moved by `,` `.`, jumped by `;`, typed with `f`;
//! its readout equals `report --at` at the same frequency (an independent
//! path: the command line's JSON), for A and B.

use crate::support::cli::stdout_of;
use crate::support::keys::{key, press, screen_at, type_text};
use crossterm::event::KeyCode;
use loopwright::model::scenario::Scenario;
use loopwright::ui::app::App;
use loopwright::ui::theme::Theme;

fn example(name: &str) -> (Scenario, String) {
    let p = format!("scenarios/{name}.ron");
    (Scenario::load(std::path::Path::new(&p)).unwrap(), p)
}

fn at(file: &str, f: &str) -> serde_json::Value {
    let out = stdout_of(&["report", file, "--json", "--at", f]);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    v["points"][0].clone()
}

#[test]
fn readout_equals_report_at_for_a_and_b() {
    let (a, fa) = example("adc_driver_2n2");
    let (b, fb) = example("line_driver_cable");
    let mut app = App::new(vec![(a, None), (b, None)], Theme::new(false, false));
    app.on_key(key(KeyCode::Char('f')));
    type_text(&mut app, "10k");
    app.on_key(key(KeyCode::Enter));
    assert_eq!(app.probe_hz, 10e3);
    let screen = screen_at(&app, 120, 40);
    for (label, file, slot) in [("A", &fa, 0), ("B", &fb, 1)] {
        let p = at(file, "10k");
        let r = app.slots[slot].readout.as_ref().unwrap();
        for (k, got) in [
            ("gain_mag", r.gain_mag),
            ("gain_phase_deg", r.gain_phase_deg),
            ("loop_mag", r.loop_mag),
            ("loop_phase_deg", r.loop_phase_deg),
            ("zout_mag", r.zout_mag),
            ("zin_mag", r.zin_mag),
            ("noise_density", r.noise_density),
        ] {
            let want = p[k].as_f64().unwrap();
            let got = got.unwrap();
            assert!(
                ((got - want) / want).abs() < 1e-12,
                "{label} {k}: {got} vs {want}"
            );
        }
        // The line on screen: 20·log10 |H| with one decimal and the phase.
        let line = format!(
            "{label} @ 10kHz · gain {:.1}dB∠{:.1}°",
            20.0 * p["gain_mag"].as_f64().unwrap().log10(),
            p["gain_phase_deg"].as_f64().unwrap()
        );
        assert!(screen.contains(&line), "{line}\n{screen}");
    }
}

#[test]
fn keys_move_jump_and_stay_within_the_sweep() {
    let (s, file) = example("adc_driver_2n2");
    let mut app = App::new(vec![(s, None)], Theme::new(false, false));
    let start = app.probe_hz;
    // Ten tenths of a decade up is one decade.
    press(&mut app, KeyCode::Char('.'), 10);
    assert!((app.probe_hz / (10.0 * start) - 1.0).abs() < 1e-9);
    press(&mut app, KeyCode::Char(','), 10);
    assert!((app.probe_hz / start - 1.0).abs() < 1e-9);
    // `;` visits f−3dB, the crossover and the band edges in frequency order.
    let r: serde_json::Value =
        serde_json::from_str(&stdout_of(&["report", &file, "--json"])).unwrap();
    let mut marks = [
        r["f_3db_hz"].as_f64().unwrap(),
        r["crossover_hz"].as_f64().unwrap(),
        r["band_hz"][0].as_f64().unwrap(),
        r["band_hz"][1].as_f64().unwrap(),
    ];
    marks.sort_by(f64::total_cmp);
    let above: Vec<f64> = marks.iter().copied().filter(|f| *f > start).collect();
    for want in above.iter().chain(marks.iter()) {
        app.on_key(key(KeyCode::Char(';')));
        assert!(
            (app.probe_hz / want - 1.0).abs() < 1e-12,
            "{} vs {want}",
            app.probe_hz
        );
    }
    // The cursor stops at the sweep's ends; a typed frequency outside it
    // is refused and the cursor stays.
    press(&mut app, KeyCode::Char('.'), 200);
    let top = app.slot().eval.analysis.sweep.points.last().unwrap().f_hz;
    assert_eq!(app.probe_hz, top);
    app.on_key(key(KeyCode::Char('f')));
    type_text(&mut app, "0");
    app.on_key(key(KeyCode::Enter));
    assert_eq!(app.probe_hz, top);
    assert!(app.status.contains("outside the sweep"), "{}", app.status);
}

/// Issue 12 item 13: the figures header keeps its columns in place as the
/// cursor moves, even where the probed frequency's text grows
/// ("Zout@1k" to "Zout@12.6M").
#[test]
fn figures_header_keeps_its_columns_as_the_cursor_moves() {
    let (a, _) = example("line_driver_cable");
    let mut app = App::new(vec![(a, None)], Theme::new(false, false));
    let header_at = |app: &App| {
        let screen = screen_at(app, 120, 40);
        let line = screen
            .lines()
            .find(|l| l.contains("noise rms"))
            .unwrap()
            .to_string();
        line.chars()
            .collect::<Vec<_>>()
            .windows(9)
            .position(|w| w.iter().collect::<String>() == "noise rms")
            .unwrap()
    };
    let before = header_at(&app);
    app.on_key(key(KeyCode::Char('f')));
    type_text(&mut app, "12.6M");
    app.on_key(key(KeyCode::Enter));
    assert!(screen_at(&app, 120, 40).contains("Zout@12.6M"));
    assert_eq!(header_at(&app), before);
}

/// At 80 columns the readout still holds every part (closer set), for A
/// and for B.
#[test]
fn readout_fits_every_part_at_80_columns() {
    let (a, _) = example("mic_preamp");
    let (b, _) = example("bridge_gain_101");
    let app = App::new(vec![(a, None), (b, None)], Theme::new(false, false));
    let screen = screen_at(&app, 80, 24);
    for tag in ["A @ ", "B @ "] {
        let line = screen.lines().find(|l| l.starts_with(tag)).unwrap();
        for part in ["gain ", "loop ", "Zout ", "Zin ", "en "] {
            assert!(line.contains(part), "{part} in {line}");
        }
    }
}
