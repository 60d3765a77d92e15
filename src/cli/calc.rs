//! Placeholder until the formulas land.
use clap::Args;
#[derive(Args)]
pub struct CalcArgs {}
pub fn run(_a: &CalcArgs) -> anyhow::Result<()> {
    anyhow::bail!("not yet")
}
