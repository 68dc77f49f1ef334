//! `priorsmith sweep`: refit with every belief widened or narrowed by each width
//! factor, and write the table, the plot and one fit folder per width
//! (see [`priorsmith::sweep`] and docs/sweep-and-batch.md).

use super::{load, progress::Progress, usage, SpecArgs};
use anyhow::Result;
use priorsmith::fit::verdict::fmt_num;
use priorsmith::{output, sweep};
use std::path::Path;

/// Parse "0.5,0.75,1,1.5,2".
fn parse_list<T: std::str::FromStr>(s: &str, what: &str) -> Result<Vec<T>> {
    s.split(',')
        .map(|t| {
            t.trim()
                .parse::<T>()
                .map_err(|_| usage(format!("--{what} {s}: `{}` is not a number", t.trim())))
        })
        .collect()
}

pub fn cmd_sweep(
    a: &SpecArgs,
    widths: &str,
    beliefs: Option<&str>,
    out: &Path,
    quiet: bool,
    require_met: bool,
) -> Result<()> {
    let ws: Vec<f64> = parse_list(widths, "widths")?;
    let ws = sweep::check_widths(&ws).map_err(|m| usage(format!("--widths {widths}: {m}")))?;
    let spec = load(a)?;
    let which: Option<Vec<usize>> = match beliefs {
        None => None,
        Some(s) => {
            let v: Vec<usize> = parse_list(s, "beliefs")?;
            let n = spec.beliefs.len();
            if let Some(bad) = v.iter().find(|i| **i == 0 || **i > n) {
                return Err(usage(format!(
                    "--beliefs {s}: belief {bad} does not exist; {} has beliefs 1 to {n}",
                    a.spec.display()
                )));
            }
            Some(v.iter().map(|i| i - 1).collect())
        }
    };
    let stage = output::folder::Staging::begin(out)?;
    let pb = Progress::new(quiet, "refitting widths");
    let done = std::sync::atomic::AtomicUsize::new(0);
    if let Some(pb) = &pb {
        pb.update(0, ws.len(), "");
    }
    let tick = || {
        let k = done.fetch_add(1, std::sync::atomic::Ordering::Relaxed) + 1;
        if let Some(pb) = &pb {
            pb.update(k, ws.len(), "");
        }
    };
    let pts = sweep::run(&spec, &ws, which.as_deref(), &tick)?;
    if let Some(pb) = pb {
        pb.finish();
    }
    // Render everything before writing anything.
    let csv = sweep::table_csv(&pts)?;
    let svg = sweep::plot_svg(&pts)?;
    let dir = stage.path();
    for p in &pts {
        output::write_fit(&dir.join(format!("width-{}", p.width)), &p.result)?;
    }
    output::write_atomic(&dir.join("sweep.csv"), &csv)?;
    output::write_atomic(&dir.join("sweep.svg"), svg.as_bytes())?;
    super::note_previous(out, stage.commit()?, quiet);
    if !quiet {
        let r0 = &pts[0].result;
        let free = &r0.free;
        print!("{:>7}", "width");
        for n in free {
            print!("  {n:>18}");
        }
        println!("  {:>11}  verdict", "fresh D");
        for p in &pts {
            print!("{:>7}", p.width);
            for n in free {
                print!("  {:>18}", fmt_num(p.result.hyperparameters[n]));
            }
            println!(
                "  {:>11.3e}  {}",
                p.result.total.fresh,
                output::explain::overall_words(&p.result)
            );
        }
        println!(
            "\nwrote {0}/sweep.csv, {0}/sweep.svg and {0}/width-<w>/ (fit.json, summary.txt, draws.csv)",
            out.display()
        );
        println!("{}", output::summary::CAUTION);
    }
    let mut first_err = Ok(());
    for p in &pts {
        let r = super::escalate(
            &format!("sweep width {}", p.width),
            &p.result,
            quiet,
            require_met,
        );
        if first_err.is_ok() {
            first_err = r;
        }
    }
    first_err
}
