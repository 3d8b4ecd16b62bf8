//! `model`: the driver model for a JSON request, as JSON or as a table.

use anyhow::{Context, bail};

use super::read_input;

pub fn model_command(file: &std::path::Path, table: bool) -> anyhow::Result<()> {
    use eddybench::analysis::model_table::{MODEL_CAVEATS, quantity_rows};
    use eddybench::web::api::model::{ModelRequest, evaluate_request};
    let text = read_input(file)?;
    let request: ModelRequest =
        serde_json::from_str(&text).context("the request is not valid JSON for the model")?;
    let report = match evaluate_request(&request) {
        Ok(report) => report,
        Err(eddybench::web::AppError::Invalid { field, message }) => bail!("{field}: {message}"),
        Err(other) => bail!("{other}"),
    };
    if !table {
        let mut answer = serde_json::to_value(&report)?;
        answer["caveats"] = serde_json::json!(MODEL_CAVEATS);
        println!("{}", serde_json::to_string_pretty(&answer)?);
        return Ok(());
    }
    let rows = quantity_rows(&report);
    let width = rows
        .iter()
        .map(|r| r.title.chars().count())
        .max()
        .unwrap_or(0);
    for row in &rows {
        let pad = width - row.title.chars().count();
        println!("{}{}  {}", row.title, " ".repeat(pad), row.display());
    }
    if report.switch_thermal_runaway {
        println!("\nSwitch thermal runaway: no steady junction temperature below its limit.");
    }
    println!();
    if report.flags.is_empty() {
        println!("No flags.");
    }
    for flag in &report.flags {
        let severity = serde_json::to_value(flag.severity)?;
        println!(
            "{:<8} {:<20} {}",
            severity.as_str().unwrap_or(""),
            flag.code,
            flag.message
        );
    }
    println!();
    for caveat in MODEL_CAVEATS {
        println!("Note: {caveat}");
    }
    Ok(())
}
