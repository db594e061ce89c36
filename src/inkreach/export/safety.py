"""The safety caution that goes with every export."""

__all__ = ["SAFETY_TEXT"]

SAFETY_TEXT = (
    "Caution: a drawing arm moves on its own and can pinch. Keep hands, hair, "
    "loose sleeves and jewellery clear of the linkage while the motors are powered. "
    "Rehearse every drawing with the pen lifted first, and keep a power switch "
    "within reach so you can cut the motors at once. Check the stream's figures "
    "(size, time, joint angles and speeds) before running it, and follow the motor, "
    "driver and power-supply makers' instructions and your local rules."
)
