"""The uncertainty ensemble: sampled inputs through the same model and rules as one run."""
