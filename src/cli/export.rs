//! `export`: a build as one JSON document or as CSV tables.

use std::path::PathBuf;

use anyhow::{Context, bail};

use eddybench::store::Store;

use super::ExportFormat;

pub async fn export_command(
    store: &Store,
    slug: &str,
    format: ExportFormat,
    out: Option<PathBuf>,
) -> anyhow::Result<()> {
    use eddybench::export::tables::{Table, write_table};
    let mut document = match store.export_build(slug).await {
        Err(eddybench::store::StoreError::NotFound) => bail!("there is no build `{slug}`"),
        other => other?,
    };
    document.add_analyses();
    match (format, out) {
        (ExportFormat::Json, None) => println!("{}", document.to_json()),
        (ExportFormat::Json, Some(path)) => std::fs::write(&path, document.to_json() + "\n")
            .with_context(|| format!("cannot write {}", path.display()))?,
        (ExportFormat::Csv, out) => {
            let dir = out.unwrap_or_else(|| PathBuf::from(format!("{slug}-csv")));
            std::fs::create_dir_all(&dir)
                .with_context(|| format!("cannot create {}", dir.display()))?;
            for table in Table::ALL {
                let path = dir.join(table.file_name());
                std::fs::write(&path, write_table(&document, table))
                    .with_context(|| format!("cannot write {}", path.display()))?;
            }
            eprintln!("Wrote {} tables to {}", Table::ALL.len(), dir.display());
        }
    }
    Ok(())
}
