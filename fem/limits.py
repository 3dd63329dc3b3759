"""Limits shared by the deck, which refuses a case too large before solving, and the analyses,
which size their tables by them."""

__all__ = ["ROWS_LIMIT"]

# Our choice: rows of a free, history, harmonic or mode-shape table (recorded nodes x samples);
# 5e6 rows are about 0.7 GB of CSV, written and also held in memory.
ROWS_LIMIT = 5_000_000
