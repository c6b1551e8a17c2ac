"""The caution every output carries: springs store energy and flexures fail in fatigue."""

__all__ = ["CAUTION"]

CAUTION = (
    "Results are estimates from idealised analytic models. Springs store energy and flexures fail in "
    "fatigue: build and test prototypes, check fatigue life, tolerances and the loading the models leave "
    "out. Local codes, standards and licensed engineering practice take precedence over these results."
)
