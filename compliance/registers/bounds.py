"""Sanity bounds on what a register may hold: values past them are typing errors, refused with
the field named, rather than stored and calculated with. They are common practice, no source,
set well past any real building, anchor or roof; none is an engineering limit (those come from
a profile or the maker's figures, and name their source). The equipment ratings' bounds are with
the ratings, in ``ratings.py``."""

MAX_RATED_CAPACITY_KN = 1000.0
"""An anchor's rated capacity; roof anchors are rated in tens of kN."""

MAX_SITE_HEIGHT_M = 1000.0
"""A building's roof height above ground; the tallest buildings stand a little over 800 m."""

STOREYS = (1, 300)
"""The fewest and most storeys a building may have."""

ANCHOR_BEYOND_OUTLINE_M = 5.0
"""How far past the roof outline's bounding box an anchor may lie: anchors sit on a parapet's
edge, or on a davit base outside the plan the outline was drawn from."""

ANCHOR_FROM_ORIGIN_M = 1000.0
"""How far from the plan's origin an anchor may lie on a site without an outline."""
