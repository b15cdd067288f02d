//! `tidetally glm` (under construction).

pub(super) fn run(_args: super::GlmArgs) -> anyhow::Result<()> {
    anyhow::bail!("`glm` is not built yet")
}
