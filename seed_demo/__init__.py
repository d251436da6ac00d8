"""The demo scenario (installed as ratebank._seed_demo): invented; every k(T) value is synthetic."""
