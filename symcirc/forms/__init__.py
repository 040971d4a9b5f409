"""forms"""
