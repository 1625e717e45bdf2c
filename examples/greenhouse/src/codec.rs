//! Frames: a batch of readings encoded for the trip to a worker.
//!
//! Layout: varint count, then per reading its sensor id (2 bytes) and varint sequence
//! number, then the values in the chosen [`Codec`], then, with checksums on, the 32-bit
//! FNV-1a of everything before it.

use crate::{Codec, HubError, Reading, Unit};

/// A decoded reading: sensor, sequence number, value in hundredths of the display unit.
pub type Decoded = (u16, u32, i64);

fn put_varint(out: &mut Vec<u8>, mut v: u64) {
    while v >= 0x80 {
        out.push((v as u8) | 0x80);
        v >>= 7;
    }
    out.push(v as u8);
}

fn zigzag(v: i64) -> u64 {
    ((v << 1) ^ (v >> 63)) as u64
}

fn unzigzag(v: u64) -> i64 {
    ((v >> 1) as i64) ^ -((v & 1) as i64)
}

fn fnv1a(bytes: &[u8]) -> u32 {
    bytes
        .iter()
        .fold(0x811c_9dc5u32, |h, &b| (h ^ b as u32).wrapping_mul(0x0100_0193))
}

struct Cursor<'a> {
    bytes: &'a [u8],
    pos: usize,
    frame: usize,
}

impl Cursor<'_> {
    fn byte(&mut self) -> Result<u8, HubError> {
        let b = *self
            .bytes
            .get(self.pos)
            .ok_or(HubError::Truncated { frame: self.frame })?;
        self.pos += 1;
        Ok(b)
    }

    fn varint(&mut self) -> Result<u64, HubError> {
        let mut v = 0u64;
        for shift in (0..64).step_by(7) {
            let b = self.byte()?;
            v |= ((b & 0x7f) as u64) << shift;
            if b < 0x80 {
                return Ok(v);
            }
        }
        Err(HubError::Truncated { frame: self.frame })
    }
}

/// Encodes one batch of readings, converting values to `unit`.
pub fn encode(batch: &[Reading], unit: Unit, codec: Codec, checksum: bool) -> Vec<u8> {
    let mut out = Vec::with_capacity(batch.len() * 6 + 8);
    put_varint(&mut out, batch.len() as u64);
    for r in batch {
        out.extend_from_slice(&r.sensor.to_le_bytes());
        put_varint(&mut out, r.seq as u64);
    }
    match codec {
        Codec::Plain => {
            for r in batch {
                out.extend_from_slice(&unit.from_centi_celsius(r.centi_celsius).to_le_bytes());
            }
        }
        Codec::Varint => {
            for r in batch {
                put_varint(&mut out, zigzag(unit.from_centi_celsius(r.centi_celsius)));
            }
        }
        Codec::Delta => {
            // deltas are taken on the sensors' own Celsius values, which change slowly and
            // so stay small; the decoder scales them to the display unit
            if let Some(first) = batch.first() {
                put_varint(&mut out, zigzag(unit.from_centi_celsius(first.centi_celsius)));
                for w in batch.windows(2) {
                    put_varint(&mut out, zigzag(w[1].centi_celsius - w[0].centi_celsius));
                }
            }
        }
    }
    if checksum {
        let sum = fnv1a(&out);
        out.extend_from_slice(&sum.to_le_bytes());
    }
    out
}

/// Scales a Celsius delta to the display unit.
///
/// PLANTED DEFECT (deterministic, `Delta` × `Fahrenheit`): the 9/5 scale is applied to
/// each delta with integer division, so the truncation error of every delta adds up
/// along the batch and decoded Fahrenheit values drift away from the exact conversion.
/// Celsius and Kelvin have scale 1 and are exact.
fn scale_delta(unit: Unit, d: i64) -> i64 {
    match unit {
        Unit::Celsius | Unit::Kelvin => d,
        Unit::Fahrenheit => d * 9 / 5,
    }
}

/// Decodes frame number `frame`.
pub fn decode(
    bytes: &[u8],
    frame: usize,
    unit: Unit,
    codec: Codec,
    checksum: bool,
) -> Result<Vec<Decoded>, HubError> {
    let body = if checksum {
        if bytes.len() < 4 {
            return Err(HubError::Truncated { frame });
        }
        let (body, tail) = bytes.split_at(bytes.len() - 4);
        let want = u32::from_le_bytes([tail[0], tail[1], tail[2], tail[3]]);
        if fnv1a(body) != want {
            return Err(HubError::Checksum { frame });
        }
        body
    } else {
        bytes
    };
    let mut c = Cursor {
        bytes: body,
        pos: 0,
        frame,
    };
    let n = c.varint()? as usize;
    let mut heads = Vec::with_capacity(n);
    for _ in 0..n {
        let sensor = u16::from_le_bytes([c.byte()?, c.byte()?]);
        let seq = c.varint()? as u32;
        heads.push((sensor, seq));
    }
    let mut out = Vec::with_capacity(n);
    let mut prev = 0i64;
    for (i, (sensor, seq)) in heads.into_iter().enumerate() {
        let v = match codec {
            Codec::Plain => {
                let mut b = [0u8; 8];
                for x in &mut b {
                    *x = c.byte()?;
                }
                i64::from_le_bytes(b)
            }
            Codec::Varint => unzigzag(c.varint()?),
            Codec::Delta if i == 0 => unzigzag(c.varint()?),
            Codec::Delta => prev + scale_delta(unit, unzigzag(c.varint()?)),
        };
        prev = v;
        out.push((sensor, seq, v));
    }
    if c.pos != body.len() {
        return Err(HubError::Truncated { frame });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn batch() -> Vec<Reading> {
        [2150, 2153, 2149, 2160, -310]
            .iter()
            .enumerate()
            .map(|(i, &c)| Reading {
                sensor: 3,
                seq: i as u32,
                centi_celsius: c,
            })
            .collect()
    }

    #[test]
    fn exact_codecs_round_trip() {
        for codec in [Codec::Plain, Codec::Varint] {
            for unit in [Unit::Celsius, Unit::Fahrenheit, Unit::Kelvin] {
                let f = encode(&batch(), unit, codec, true);
                let d = decode(&f, 0, unit, codec, true).unwrap();
                let want: Vec<i64> = batch()
                    .iter()
                    .map(|r| unit.from_centi_celsius(r.centi_celsius))
                    .collect();
                assert_eq!(d.iter().map(|x| x.2).collect::<Vec<_>>(), want);
            }
        }
    }

    #[test]
    fn corrupted_frames_are_refused() {
        let mut f = encode(&batch(), Unit::Celsius, Codec::Varint, true);
        f[3] ^= 1;
        assert_eq!(
            decode(&f, 7, Unit::Celsius, Codec::Varint, true),
            Err(HubError::Checksum { frame: 7 })
        );
        let f = encode(&batch(), Unit::Celsius, Codec::Plain, false);
        assert_eq!(
            decode(&f[..f.len() - 1], 2, Unit::Celsius, Codec::Plain, false),
            Err(HubError::Truncated { frame: 2 })
        );
    }
}
