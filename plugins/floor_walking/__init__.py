"""floor_walking: floors and footbridges under footfall (in progress)."""
