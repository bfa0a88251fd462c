//! Issue 25, item 9: the workbench's spread jobs hand the memory they
//! freed back to the system. In a process of its own (this test binary
//! runs nothing else, so no other test's allocations move the figures):
//! after each finished job, and after a cancelled one, the process's
//! resident anonymous memory (`RssAnon`, Linux proc(5)) stays within a
//! bound above where it started, less what is still in use (`uordblks`
//! of glibc's mallinfo2(3)). Measured on the 2-core dev machine
//! (2026-12-04, test profile): about 0.9 MB above the start with the
//! memory handed back, about 3.3 MB without (the allocator kept each pool
//! thread's freed trial blocks), so the bound sits between them: 1.5 MB
//! plus 256 kB per pool thread for the stacks the threads touch (common
//! practice: a thread's touched stack is tens of kB).

#[cfg(all(target_os = "linux", target_env = "gnu"))]
mod linux {
    use loopwright::model::Scenario;
    use loopwright::ui::spread_job::SpreadJob;
    use std::time::Duration;

    /// Resident anonymous memory of this process, kB (proc(5)).
    fn anon_kb() -> i64 {
        let status = std::fs::read_to_string("/proc/self/status").unwrap();
        let line = status.lines().find(|l| l.starts_with("RssAnon:")).unwrap();
        line.split_whitespace().nth(1).unwrap().parse().unwrap()
    }

    /// Bytes the allocator has handed out and not had back, kB.
    fn in_use_kb() -> i64 {
        // SAFETY: mallinfo2 reads the allocator's counters; no pointers.
        let m = unsafe { libc::mallinfo2() };
        (m.uordblks / 1024) as i64
    }

    fn finish(job: &mut SpreadJob) {
        while job.running() {
            job.poll();
            std::thread::sleep(Duration::from_millis(2));
        }
    }

    #[test]
    fn spread_jobs_hand_their_freed_memory_back() {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("scenarios/line_driver_cable.ron");
        let mut s = Scenario::load(&path).unwrap();
        s.spread.as_mut().unwrap().trials = Some(20_000);
        let threads = std::thread::available_parallelism().map_or(1, |n| n.get()) as i64;
        let bound_kb = 1536 + 256 * threads;
        let (anon0, used0) = (anon_kb(), in_use_kb());
        let mut job = SpreadJob::default();
        let rf = s.stage.rf.unwrap();
        for k in 0..4 {
            s.stage.rf = Some(rf * (1.0 + 0.01 * f64::from(k + 1)));
            job.follow(&s);
            if k == 2 {
                // A job cancelled part-way by the next change.
                while job.done() < 2_000 && job.running() {
                    std::thread::sleep(Duration::from_millis(1));
                }
                s.stage.rf = Some(rf * 1.5);
                job.follow(&s);
            }
            finish(&mut job);
            assert!(job.result.is_some(), "job {k} finished");
            let kept = (anon_kb() - anon0) - (in_use_kb() - used0);
            assert!(
                kept <= bound_kb,
                "after job {k}: {kept} kB resident beyond what is in use (bound {bound_kb} kB)"
            );
        }
    }
}
