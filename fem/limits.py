"""Limits shared by the deck, which refuses a case too large before solving, and the analyses,
which size their tables by them."""

__all__ = ["HUGE", "ROWS_LIMIT"]

# Our choice: rows of a free, history, harmonic or mode-shape table (recorded nodes x samples);
# 5e6 rows are about 0.7 GB of CSV, written and also held in memory.
ROWS_LIMIT = 5_000_000

# Our choice: the largest stiffness or mass entry computed with. Products of two such entries
# (as in K u or phi^T K phi) stay below the floating-point range (1.8e308); the deck refuses a
# value or a member beyond it before assembly, and assembly refuses matrices beyond it.
HUGE = 1e150
