//! `tidetally score` (under construction).

pub(super) fn run(_args: super::ScoreArgs) -> anyhow::Result<()> {
    anyhow::bail!("`score` is not built yet")
}
