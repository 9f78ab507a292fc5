"""Two-stage chains: two stages designed together, the second stage being the first one's load."""
