//! `tidetally serve` (under construction).

pub(super) fn run(_args: super::ServeArgs) -> anyhow::Result<()> {
    anyhow::bail!("`serve` is not built yet")
}
