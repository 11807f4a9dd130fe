"""Replanning mid-night: from a plan file, the night log and the time now to the
restart state of the rest of the night (:mod:`.situation`), and what changed
(:mod:`.diff`)."""
