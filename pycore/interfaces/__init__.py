"""How the core is reached: the command line and the browser worker's table of actions."""
