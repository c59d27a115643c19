"""Ball, cloth and cushion physics: event-based motion, cushion impacts, batch simulation."""
