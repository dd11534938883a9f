"""Each scenario of a plan with and without its measures: the public run API."""
