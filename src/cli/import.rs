//! `import`: a build recreated from an export document.

use anyhow::Context;

use eddybench::store::Store;

use super::read_input;

pub async fn import_command(store: &Store, file: &std::path::Path) -> anyhow::Result<()> {
    let text = read_input(file)?;
    let document = eddybench::export::parse_document(&text)
        .with_context(|| format!("nothing imported from {}", file.display()))?;
    let slug = store
        .import_build(&document)
        .await
        .with_context(|| format!("nothing imported from {}", file.display()))?;
    if slug != document.build.slug {
        eprintln!(
            "The slug `{}` is taken here; imported as `{slug}`.",
            document.build.slug
        );
    }
    println!("{slug}");
    Ok(())
}
