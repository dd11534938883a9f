"""prepkit: outbreak planning scenarios and briefing packs for emergency planners."""

from __future__ import annotations

__version__ = "0.1.0"
