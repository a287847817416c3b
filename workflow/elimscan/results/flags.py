"""The wording of path flags: written by the drivers, counted by ``trouble``, matched by the tests; and
``no_barrier_reason``, the one rule saying which computed paths are no barrier (``records.counts_as_barrier``
and the drivers' ``PathResult.counts_as_barrier`` both ask it)."""

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
#: start of the flag of a path whose own geometry forms another alkene isomer than the one it was computed for (the
#: isomers and WRONG_ISOMER_TAIL follow, ``wrong_isomer_flag``): such a path does not reach its products
WRONG_ISOMER = "the path forms"
WRONG_ISOMER_TAIL = "its top is not a barrier of that product and is left out of every share"


def wrong_isomer_flag(formed: str, named: str) -> str:
    """Return the flag of a path whose geometry forms ``formed`` (SMILES) where ``named`` was expected."""
    return f"{WRONG_ISOMER} {formed}, not the {named} it was computed for: {WRONG_ISOMER_TAIL}"


#: start of the flag of a path stopped by its gradient budget (paths.gradient_budget_per_atom); the stage that
#: ran long, the gradients of each stage and BUDGET_STOPPED follow (``budget_spent_flag``)
BUDGET_SPENT = "gradient budget spent"
#: why a path stopped by its gradient budget is no barrier: its top is an unfinished estimate, left out of every
#: product share, the E2 : SN2 split, the lowest of several starts and the DFT tier
BUDGET_STOPPED = ("the path was stopped before it finished: its top is an unfinished estimate, not a barrier, and "
                  "is left out of every share")


def budget_spent_flag(stage: str, spent: int, limit: int, by_stage: dict[str, int]) -> str:
    """Return the flag of a path stopped by its gradient budget in ``stage`` (counts in gradients)."""
    counts = ", ".join(f"{name} {count}" for name, count in by_stage.items())
    return f"{BUDGET_SPENT} in the {stage} ({spent} of {limit} gradients; {counts}): {BUDGET_STOPPED}"


def no_barrier_reason(reaches_products: bool | None, budget_spent_in: str | None) -> str | None:
    """Return why a computed path's top is no barrier (BUDGET_STOPPED or NOT_TO_PRODUCTS), None when it is one.

    The one rule behind every share, the E2 : SN2 split, the lowest start and the DFT tier: a path stopped by
    its gradient budget, or shown not to reach its products, decides none of them.
    """
    if budget_spent_in is not None:
        return BUDGET_STOPPED
    if reaches_products is False:
        return NOT_TO_PRODUCTS
    return None


# Flags read from a path's (constrained) end geometry: warnings about what the path looks like. Whether a
# path counts as a barrier is decided by ``no_barrier_reason`` (NOT_TO_PRODUCTS: a free relaxation of its end, or
# a verified saddle; or a stop by the gradient budget).
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
