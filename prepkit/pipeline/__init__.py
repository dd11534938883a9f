"""One run from workbook to briefing pack: files, guards, manifest, summary, watch."""
