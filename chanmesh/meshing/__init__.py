"""Mesh assembly: every mesher returns one neutral ``ChannelMesh`` that every writer takes."""

from chanmesh.meshing.model import Block, ChannelMesh, Group

__all__ = ["Block", "ChannelMesh", "Group"]
