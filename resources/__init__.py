"""Files shipped with the application (installed as the package ``scalewright.resources``)."""
