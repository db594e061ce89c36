"""The demo pictures: our own scene, rendered reproducibly with Pillow and numpy.

A community print shop runs a desk-top pen arm that turns visitors' pictures
into postcards. These pictures stand in for what visitors bring: a still life
with light and shade, a line-art emblem, and a short text.
"""

import os
import tempfile

import numpy as np
from PIL import Image, ImageDraw, ImageFont

from ..errors import InkreachError

__all__ = ["still_life", "emblem", "postcard_text", "DEMO_PICTURES", "POSTCARD",
           "demo_picture", "write_demo_pictures"]


def still_life(width=960, height=720):
    """Two shaded spheres and a box on a table, lit from the upper left.

    Returns
    -------
    PIL.Image.Image
        An 8-bit greyscale picture.

    Examples
    --------
    >>> still_life(96, 72).size
    (96, 72)
    """
    yy, xx = np.mgrid[0:height, 0:width].astype(float)
    s = width / 960.0
    light = np.array([-0.5, -0.6, 0.62])
    light /= np.linalg.norm(light)
    img = 0.82 - 0.18 * (yy / height)                       # wall, darker low down
    table = yy > 0.68 * height
    img = np.where(table, 0.62 + 0.2 * (yy - 0.68 * height) / (0.32 * height), img)

    def sphere(cx, cy, r, albedo):
        nonlocal img
        dx, dy = (xx - cx) / r, (yy - cy) / r
        inside = dx * dx + dy * dy < 1.0
        dz = np.sqrt(np.clip(1.0 - dx * dx - dy * dy, 0, 1))
        shade = np.clip(dx * light[0] + dy * light[1] + dz * light[2], 0, 1)
        spec = np.clip(shade, 0, 1) ** 40
        val = albedo * (0.12 + 0.88 * shade) + 0.35 * spec
        # soft shadow on the table to the lower right
        sx, sy = (xx - cx - 0.55 * r) / (1.25 * r), (yy - cy - 0.92 * r) / (0.28 * r)
        shadow = np.exp(-(sx * sx + sy * sy) * 2.2)
        img = np.where(table & ~inside, img * (1 - 0.55 * shadow), img)
        img = np.where(inside, val, img)

    # a box: three faces with different light
    bx, by, bw, bh, d = 600 * s, 330 * s, 200 * s, 190 * s, 70 * s
    front = (xx > bx) & (xx < bx + bw) & (yy > by) & (yy < by + bh)
    top = (yy > by - d) & (yy <= by) & (xx > bx + (by - yy)) & (xx < bx + bw + (by - yy))
    side = (xx >= bx + bw) & (xx < bx + bw + d) & (yy > by - (xx - bx - bw)) & \
        (yy < by + bh - (xx - bx - bw))
    shadow_box = table & (xx > bx + bw * 0.3) & (xx < bx + bw + 2.2 * d) & (yy < by + bh + 0.5 * d)
    img = np.where(shadow_box & ~front & ~side, img * 0.6, img)
    img = np.where(front, 0.55, img)
    img = np.where(top, 0.9, img)
    img = np.where(side, 0.3, img)
    sphere(250 * s, 400 * s, 130 * s, 0.85)
    sphere(470 * s, 470 * s, 70 * s, 0.6)
    rng = np.random.default_rng(7)
    img = img + rng.normal(0, 0.01, img.shape)               # a little film grain
    return Image.fromarray((np.clip(img, 0, 1) * 255).round().astype(np.uint8), "L")


def emblem(size=800):
    """A line-art emblem of the print shop: rings, a star, a pen nib and rays.

    Examples
    --------
    >>> emblem(80).size
    (80, 80)
    """
    k = 4
    S = size * k
    im = Image.new("L", (S, S), 255)
    d = ImageDraw.Draw(im)
    w = max(1, int(round(S * 0.008)))
    c = S / 2
    for r, ww in ((0.46, w), (0.41, w)):
        d.ellipse([c - r * S, c - r * S, c + r * S, c + r * S], outline=0, width=ww)
    # five-pointed star
    pts = []
    for i in range(10):
        rad = (0.30 if i % 2 == 0 else 0.13) * S
        a = -np.pi / 2 + i * np.pi / 5
        pts.append((c + rad * np.cos(a), c + rad * np.sin(a)))
    d.line(pts + [pts[0]], fill=0, width=w, joint="curve")
    # rays between the rings and the star
    for i in range(16):
        a = i * np.pi / 8 + np.pi / 16
        d.line([(c + 0.33 * S * np.cos(a), c + 0.33 * S * np.sin(a)),
                (c + 0.38 * S * np.cos(a), c + 0.38 * S * np.sin(a))], fill=0, width=w)
    # a pen nib in the middle
    nib = [(c, c + 0.08 * S), (c - 0.045 * S, c - 0.02 * S), (c, c - 0.07 * S),
           (c + 0.045 * S, c - 0.02 * S)]
    d.line(nib + [nib[0]], fill=0, width=w, joint="curve")
    d.line([(c, c + 0.08 * S), (c, c - 0.005 * S)], fill=0, width=w)
    return im.resize((size, size), Image.LANCZOS)


def postcard_text(text="Greetings from the print shop", width=1000, height=300):
    """A short text in Pillow's built-in scalable font.

    Examples
    --------
    >>> postcard_text(width=200, height=60).size
    (200, 60)
    """
    im = Image.new("L", (width, height), 255)
    d = ImageDraw.Draw(im)
    size = int(height * 0.28)
    try:
        font = ImageFont.load_default(size=size)
    except TypeError:  # Pillow < 10.1
        font = ImageFont.load_default()
    words = text.split()
    lines = [" ".join(words[: len(words) // 2]), " ".join(words[len(words) // 2:])]
    y = height * 0.12
    for line in lines:
        box = d.textbbox((0, 0), line, font=font)
        d.text(((width - (box[2] - box[0])) / 2, y), line, fill=0, font=font)
        y += size * 1.25
    return im


#: Name -> (maker, the style that suits it).
DEMO_PICTURES = {
    "emblem": (emblem, "centerline"),
    "still-life": (still_life, "hatch"),
    "postcard-text": (postcard_text, "centerline"),
}


#: The print-shop postcard: a demo picture with a caption under it.
POSTCARD = {"picture": "still-life", "style": "hatch",
            "caption": "Greetings from the print shop"}


def write_demo_pictures(folder):
    """Render every demo picture as a PNG into ``folder``; returns the paths."""
    os.makedirs(folder, exist_ok=True)
    paths = []
    for name, (maker, _) in DEMO_PICTURES.items():
        path = os.path.join(folder, f"{name}.png")
        maker().save(path, format="PNG", optimize=False)
        paths.append(path)
    return paths


def demo_picture(name="emblem"):
    """Path of a demo picture (from ``demo_images/`` if present, else rendered).

    Returns
    -------
    path : str
    style : str
        The style that suits the picture.
    """
    if name not in DEMO_PICTURES:
        raise InkreachError(f"demo picture {name!r} is unknown; use one of "
                            f"{', '.join(DEMO_PICTURES)}")
    maker, style = DEMO_PICTURES[name]
    here = os.path.dirname(os.path.abspath(__file__))
    shipped = os.path.normpath(os.path.join(here, "..", "..", "..", "demo_images", f"{name}.png"))
    if os.path.isfile(shipped):
        return shipped, style
    folder = os.path.join(tempfile.gettempdir(), "inkreach-demo")
    os.makedirs(folder, exist_ok=True)
    path = os.path.join(folder, f"{name}.png")
    if not os.path.isfile(path):
        maker().save(path, format="PNG")
    return path, style
