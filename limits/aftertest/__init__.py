"""After the test: a hardware log held against the reviewed targets and limits, and a robot file
corrected from it (log reading, alignment, comparison, identification)."""
