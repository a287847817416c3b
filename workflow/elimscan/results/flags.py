"""The wording of path flags: written by the drivers, counted by ``trouble``, matched by the tests."""

#: start of the path flag naming a base orientation of the complex that failed and was skipped
FAILED_ROTATION = "base rotation"
#: flag of a path with an unfinished point above its finished top (that point is not taken as the top)
UNFINISHED_ABOVE = "an unfinished relaxation lies above the path top and was not taken as the top"
#: flag of a path whose highest point was not relaxed to the convergence limit
UNFINISHED_MAXIMUM = ("the path maximum is an unfinished relaxation (optimizer.max_steps reached): its energy is "
                      "an upper bound")

# Flags read from a path's end geometry that say the path did not reach its alkene: its top is then no
# barrier to that alkene, and the benchmark (analysis/benchmark_scoring.py) leaves it out of its mixes.
#: the base took the proton but the C-X bond stayed (E1cb-like)
E1CB_LIKE = "proton transferred without C-X cleavage (E1cb-like)"
#: the base ended bonded to C-alpha (SN2-like)
SN2_LIKE = "base bonded to C-alpha (SN2-like)"
#: start of the flag naming another hydrogen the base took
OTHER_HYDROGEN = "the base took another hydrogen"
#: flags (or their starts) of a path that ended somewhere other than its alkene
NOT_PRODUCT_FLAGS = (E1CB_LIKE, SN2_LIKE, OTHER_HYDROGEN)
#: saddle note of a path whose end, relaxed freely, did not give the products (the CI-NEB fallback's check)
END_NOT_PRODUCTS = "the path end did not relax to products"
