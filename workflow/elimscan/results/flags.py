"""The wording of path flags: written by the drivers, counted by ``trouble``, matched by the tests."""

#: start of the path flag naming a base orientation of the complex that failed and was skipped
FAILED_ROTATION = "base rotation"
#: flag of a path with an unfinished point above its finished top (that point is not taken as the top)
UNFINISHED_ABOVE = "an unfinished relaxation lies above the path top and was not taken as the top"
#: flag of a path whose highest point was not relaxed to the convergence limit
UNFINISHED_MAXIMUM = ("the path maximum is an unfinished relaxation (optimizer.max_steps reached): its energy is "
                      "an upper bound")
#: flag of a path without a verified saddle whose freely relaxed end is not the product side: its top is no
#: barrier of this channel and is left out of every product share and of the E2 : SN2 split
NOT_TO_PRODUCTS = ("the path does not reach its products (its freely relaxed end is not the product side): its top "
                   "is not a barrier and is left out of every share")

# Flags read from a path's (constrained) end geometry: warnings about what the path looks like. Whether a
# path counts as a barrier is decided by NOT_TO_PRODUCTS (a free relaxation of its end, or a verified saddle).
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
