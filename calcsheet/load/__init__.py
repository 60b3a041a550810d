"""Loading an input: the stage that reads a TOML file into a validated Model.

It sits above the reading primitives of calcsheet/source (expressions, units, dimensions), the kinds
(calcsheet/kinds, which it expands before the model is built) and the Model itself; none of those
imports anything from here, so the layers run one way: source < kinds < model < load < derive.
"""
