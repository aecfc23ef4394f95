"""Pure, seeded design functions: blinding codes, serving orders, blocks and sets.

- :mod:`trials.design.codes` - three-digit blinding codes;
- :mod:`trials.design.williams` - Williams designs (all samples per panelist);
- :mod:`trials.design.blocks` - balanced and near-balanced incomplete blocks;
- :mod:`trials.design.sets` - forced-choice sets and their per-cup codes;
- :mod:`trials.design.allergens` - allergen conflicts and plan screening;
- :mod:`trials.design.plan` - one session's serving plan as ``PlanEntry`` rows;
- :mod:`trials.design.balance` - the balance a drawn plan reaches, in words.

No I/O, no database, nothing from the layers above (see DESIGN.md).
"""
