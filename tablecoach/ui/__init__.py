"""The Textual app: screens, widgets and the messages between them."""
