"""Kitchen Trials: blind tastings for test kitchens, from plan to decision."""

__version__ = "0.1.0"
