"""The wording of path flags: written by the drivers, counted by ``trouble``, matched by the tests."""

#: start of the path flag naming a base orientation of the complex that failed and was skipped
FAILED_ROTATION = "base rotation"
#: flag of a path with an unfinished point above its finished top (that point is not taken as the top)
UNFINISHED_ABOVE = "an unfinished relaxation lies above the path top and was not taken as the top"
#: flag of a path whose highest point was not relaxed to the convergence limit
UNFINISHED_MAXIMUM = ("the path maximum is an unfinished relaxation (optimizer.max_steps reached): its energy is "
                      "an upper bound")
#: start of the flag of a path stopped by its gradient budget (paths.gradient_budget_per_atom): the stage that ran
#: long follows; such a path is an unfinished estimate and decides no product share
BUDGET_SPENT = "gradient budget spent"
