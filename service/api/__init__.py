"""Flask blueprints: thin views (schemas -> physics -> schemas)."""
