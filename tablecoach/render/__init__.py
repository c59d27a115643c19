"""Rich renderables and the words a player reads, shared by the command line and the app."""
