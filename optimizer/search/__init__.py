"""The search: candidates and their bounds, the corner checks, seeds, the trade-off set and the
anytime selection, the exhaustive oracle, the reasons when nothing fits and the shopping hints."""
