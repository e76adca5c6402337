"""The optics of one lens: prescription, power matrix, prism, Prentice's rule, notation."""
