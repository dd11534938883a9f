"""Planning metrics on a daily series or a draws x days array: beds, surge, absence, peaks."""
