"""Everything the planner reads: the pack's words, charts, HTML and PDF, and results.xlsx."""
