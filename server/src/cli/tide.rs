//! `tidetally tide analyze|predict` and `tidetally datums` (under construction).

pub(super) fn analyze(_args: super::TideAnalyzeArgs) -> anyhow::Result<()> {
    anyhow::bail!("`tide analyze` is not built yet")
}

pub(super) fn predict(_args: super::TidePredictArgs) -> anyhow::Result<()> {
    anyhow::bail!("`tide predict` is not built yet")
}

pub(super) fn datums(_args: super::DatumsArgs) -> anyhow::Result<()> {
    anyhow::bail!("`datums` is not built yet")
}
