//! `tidetally counts` (under construction).

pub(super) fn run(_args: super::GaugeArgs) -> anyhow::Result<()> {
    anyhow::bail!("`counts` is not built yet")
}
