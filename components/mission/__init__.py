"""Mission fuel from the Breguet range equation."""
