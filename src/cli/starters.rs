//! `templates` (the catalogue of model templates, their parameters and
//! quantities) and `new` (a commented starter belief file for a template).

use super::usage;
use anyhow::Result;
use priorsmith::error::Error;
use priorsmith::{output, templates};
use std::path::{Path, PathBuf};

pub(super) fn cmd_templates(name: Option<&str>) -> Result<()> {
    match name {
        None => {
            for t in templates::TEMPLATES {
                println!("{:<16} {}", t.name, t.about);
            }
            println!("\n`priorsmith templates NAME` for parameters and quantities; `priorsmith new NAME` for a starter file.");
            println!("Families: {}", priorsmith::dist::family_names().join(", "));
        }
        Some(n) => {
            let t = templates::find(n).ok_or_else(|| unknown_template(n))?;
            println!("{} — {}\n\n[model] keys:", t.name, t.about);
            for (k, v) in t.options {
                println!("  {k:<12} {v}");
            }
            println!("\nparameters ([prior.<name>] tables):");
            for (k, v) in t.parameters {
                println!("  {k:<20} {v}");
            }
            println!("\nquantities ([[belief]] quantity = …):");
            for q in t.quantities {
                println!("  {:<16} {} [{}]", q.name, q.about, q.needs);
            }
        }
    }
    Ok(())
}

/// A template name given on the command line that no template has (exit 2).
pub(super) fn unknown_template(name: &str) -> anyhow::Error {
    usage(format!(
        "unknown template \"{name}\"\n  hint: {}",
        priorsmith::error::choice_hint(name, &templates::names())
    ))
}

pub(super) fn cmd_new(template: &str, out: Option<&Path>, force: bool, quiet: bool) -> Result<()> {
    let t = templates::find(template).ok_or_else(|| unknown_template(template))?;
    let default = PathBuf::from(format!("{}.toml", t.name));
    let path = out.unwrap_or(&default);
    if path == Path::new("-") {
        print!("{}", t.starter);
        return Ok(());
    }
    if path.exists() && !force {
        return Err(Error::io(
            path,
            std::io::Error::new(
                std::io::ErrorKind::AlreadyExists,
                "file exists (use --force to overwrite)",
            ),
        )
        .into());
    }
    output::write_atomic(path, t.starter.as_bytes())?;
    if !quiet {
        println!(
            "wrote {} — edit the beliefs, then `priorsmith fit {}`",
            path.display(),
            path.display()
        );
    }
    Ok(())
}
