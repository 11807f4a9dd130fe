"""The data layer: frozen dataclasses for every concept, SI units inside.

Nothing here imports another layer of opdplan, numpy aside: the array and its
configurations (:mod:`.array`), targets (:mod:`.targets`), the Earth frame and body
tracks of a night (:mod:`.frames`, :mod:`.night`), the night problem the geometry works
on (:mod:`.problem`), reason codes and their words (:mod:`.reasons`), the queue's
settings, candidates, visits and plan (:mod:`.plan`), the semester (:mod:`.semester`),
the night log's records (:mod:`.log`), time formats (:mod:`.times`) and input errors
(:mod:`.errors`).
"""
