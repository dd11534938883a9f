"""The words and numbers of the briefing pack, by topic."""
