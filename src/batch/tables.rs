//! The batch's combined tables: `assemble` builds results.csv, errors.csv and
//! timings.csv from the committed row records, and `merge` combines the
//! folders of a sharded batch into one (see the parent module).

use super::*;

/// Build results.csv, errors.csv and timings.csv for rows `range` from records.
/// A row without a current record (digest mismatch or none) is an error.
pub fn assemble(
    plan: &Plan,
    range: std::ops::Range<usize>,
    recs: &BTreeMap<usize, RowRecord>,
) -> Result<(Vec<u8>, Vec<u8>, Vec<u8>)> {
    let rows = &plan.rows[range];
    let current: Vec<(&PlannedRow, Option<&RowRecord>)> = rows
        .iter()
        .map(|r| {
            (
                r,
                recs.get(&r.number)
                    .filter(|x| x.digest == r.digest && x.id == r.id),
            )
        })
        .collect();
    let missing: Vec<String> = current
        .iter()
        .filter(|(_, x)| x.is_none())
        .map(|(r, _)| r.number.to_string())
        .collect();
    if !missing.is_empty() {
        return Err(Error::Limit(format!(
            "no current result for row(s) {}: run the batch (or the shard holding them) again",
            missing.join(", ")
        )));
    }
    let current: Vec<(&PlannedRow, &RowRecord)> = current
        .into_iter()
        .filter_map(|(r, x)| x.map(|x| (r, x)))
        .collect();
    // Columns: the union in order of first appearance, hyperparameters first.
    let mut hcols: Vec<String> = Vec::new();
    let mut scols: Vec<String> = Vec::new();
    for (_, x) in &current {
        for (k, _) in &x.hyperparameters {
            if !hcols.contains(k) {
                hcols.push(k.clone());
            }
        }
        for (k, _) in &x.stats {
            if !scols.contains(k) {
                scols.push(k.clone());
            }
        }
    }
    let e = |e: csv::Error| Error::Internal(e.to_string());
    let mut res = csv::Writer::from_writer(Vec::new());
    let mut head = vec!["id".to_string(), "row".to_string()];
    head.extend(hcols.iter().cloned());
    head.extend(scols.iter().cloned());
    res.write_record(&head).map_err(e)?;
    let mut errs = csv::Writer::from_writer(Vec::new());
    errs.write_record(["id", "row", "stage", "reason"])
        .map_err(e)?;
    let mut times = csv::Writer::from_writer(Vec::new());
    times
        .write_record(["id", "row", "wall_time_s"])
        .map_err(e)?;
    for (r, x) in &current {
        if x.status == RowStatus::Ok {
            let h: BTreeMap<&str, &str> = x
                .hyperparameters
                .iter()
                .chain(&x.stats)
                .map(|(k, v)| (k.as_str(), v.as_str()))
                .collect();
            let mut line = vec![r.id.clone(), r.number.to_string()];
            line.extend(
                hcols
                    .iter()
                    .chain(&scols)
                    .map(|c| h.get(c.as_str()).map_or(String::new(), |v| v.to_string())),
            );
            res.write_record(&line).map_err(e)?;
            times
                .write_record([
                    r.id.clone(),
                    r.number.to_string(),
                    format!("{:.4}", x.wall_time_s),
                ])
                .map_err(e)?;
        } else {
            errs.write_record([
                r.id.clone(),
                r.number.to_string(),
                x.stage.map(|g| g.name().to_string()).unwrap_or_default(),
                x.reason.clone().unwrap_or_default(),
            ])
            .map_err(e)?;
        }
    }
    let f = |w: csv::Writer<Vec<u8>>| w.into_inner().map_err(|e| Error::Internal(e.to_string()));
    Ok((f(res)?, f(errs)?, f(times)?))
}

/// Merge the row records of batch folders into `out` (results.csv, errors.csv,
/// timings.csv). The folders must come from the same batch (same base file,
/// table and overrides, read from their batch.json); the tables are re-read
/// so that only records matching the current rows count. `max_memory_mb`: the
/// working-memory budget (it caps the rows a table may have).
pub fn merge(dirs: &[PathBuf], out: &Path, max_memory_mb: Option<u64>) -> Result<RunReport> {
    let mut man: Option<Manifest> = None;
    for d in dirs {
        let p = d.join("batch.json");
        let text = crate::limits::read_text(&p, crate::limits::TEXT_BYTES, "batch manifest")?;
        let m: Manifest = serde_json::from_str(&text).map_err(|e| {
            Error::input(
                Location {
                    file: Some(p.clone()),
                    ..Default::default()
                },
                format!("not a batch manifest: {e}"),
            )
        })?;
        if let Some(first) = &man {
            if first.base != m.base
                || first.table != m.table
                || first.draws != m.draws
                || first.max_draws != m.max_draws
            {
                return Err(Error::input(
                    Location {
                        file: Some(p),
                        ..Default::default()
                    },
                    format!(
                        "this folder belongs to another batch ({} with {}) than {} ({} with {})",
                        m.table.display(),
                        m.base.display(),
                        dirs[0].display(),
                        first.table.display(),
                        first.base.display()
                    ),
                ));
            }
        } else {
            man = Some(m);
        }
    }
    let man = man.ok_or_else(|| Error::Limit("merge needs at least one folder".into()))?;
    let ov = Overrides {
        seed: None,
        draws: man.draws,
        max_draws: man.max_draws,
        max_memory_mb,
        ..Overrides::default()
    };
    let plan = plan(&man.base, &man.table, &ov)?;
    let mut recs: BTreeMap<usize, RowRecord> = BTreeMap::new();
    for r in &plan.rows {
        // Prefer a current ok record from any folder, then a current error.
        let mut best: Option<RowRecord> = None;
        for d in dirs {
            if let Some(x) = read_record(d, r.number) {
                if x.digest != r.digest || x.id != r.id {
                    continue;
                }
                if best.as_ref().is_none_or(|b| b.status != RowStatus::Ok) {
                    best = Some(x);
                }
            }
        }
        if let Some(b) = best {
            recs.insert(r.number, b);
        }
    }
    let (res, errs, times) = assemble(&plan, 0..plan.rows.len(), &recs)?;
    output::ensure_dir(out)?;
    let mut rep = RunReport {
        rows: plan.rows.len(),
        failed: recs.values().filter(|x| x.status != RowStatus::Ok).count(),
        not_met: recs.values().filter(|x| row_not_met(x)).count(),
        not_met_ids: recs
            .values()
            .filter(|x| row_not_met(x))
            .map(|x| x.id.clone())
            .collect(),
        ..Default::default()
    };
    for (name, bytes) in [
        ("results.csv", res),
        ("errors.csv", errs),
        ("timings.csv", times),
    ] {
        write_atomic(&out.join(name), &bytes)?;
        rep.tables.push(name.into());
    }
    Ok(rep)
}
