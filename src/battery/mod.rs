//! Battery pack, thermal node and load schedules (in progress).
