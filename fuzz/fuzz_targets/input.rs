//! The byte reader every fuzz target decodes its input with (`#[path = "input.rs"] mod input;`).
//! Every read past the end yields 0, so any byte string is a valid input.
#![allow(dead_code)] // each target uses part of the reader

/// Little byte reader that never fails.
pub struct Input<'a> {
    data: &'a [u8],
    pos: usize,
}

impl<'a> Input<'a> {
    pub fn new(data: &'a [u8]) -> Self {
        Self { data, pos: 0 }
    }

    pub fn u8(&mut self) -> u8 {
        let b = self.data.get(self.pos).copied().unwrap_or(0);
        self.pos = self.pos.saturating_add(1);
        b
    }

    /// `true` for an even byte.
    pub fn flag(&mut self) -> bool {
        self.u8() & 1 == 0
    }

    pub fn u16(&mut self) -> u16 {
        u16::from_le_bytes([self.u8(), self.u8()])
    }

    pub fn u32(&mut self) -> u32 {
        u32::from_le_bytes([self.u8(), self.u8(), self.u8(), self.u8()])
    }

    pub fn u64(&mut self) -> u64 {
        u64::from(self.u32()) | (u64::from(self.u32()) << 32)
    }

    /// `lo`–`hi` in 65,536 steps, both ends included.
    pub fn uniform(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * (f64::from(self.u16()) / f64::from(u16::MAX))
    }

    /// `lo`–`hi` (both > 0) in 65,536 steps uniform on a log scale, both ends included.
    pub fn log_uniform(&mut self, lo: f64, hi: f64) -> f64 {
        10f64.powf(self.uniform(lo.log10(), hi.log10())).clamp(lo, hi)
    }
}
