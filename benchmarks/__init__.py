"""Speed measurements of thist (ratios in one run; run each module with python -m)."""
