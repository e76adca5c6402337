"""The reading zone: where the eyes read, the imbalance down the lenses, the remedies."""
