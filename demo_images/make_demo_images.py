"""Render the demo pictures into this folder: python demo_images/make_demo_images.py"""

import os

from inkreach.cli.demo import write_demo_pictures

if __name__ == "__main__":
    for path in write_demo_pictures(os.path.dirname(os.path.abspath(__file__))):
        print(path)
