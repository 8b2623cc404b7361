//! A right-handed local frame placed in the scene.

use crate::field::Vec3;

/// Local axes and origin of an element. `x`, `y`, `z` are orthonormal and right-handed;
/// `origin` is in metres.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Frame {
    /// Where the local origin sits in the scene, metres.
    pub origin: Vec3,
    /// Local x axis (unit vector).
    pub x: Vec3,
    /// Local y axis (unit vector), z × x.
    pub y: Vec3,
    /// Local z axis (unit vector): a loop's normal, a helix's axis.
    pub z: Vec3,
}

impl Frame {
    /// The scene frame itself.
    pub fn identity() -> Self {
        Frame {
            origin: Vec3::zeros(),
            x: Vec3::x(),
            y: Vec3::y(),
            z: Vec3::z(),
        }
    }

    /// A frame at `origin` (m) with local z along `axis` and local x along `reference`
    /// made orthogonal to it. Without a reference, local x is the scene's x projected
    /// off the axis (the scene's y when the axis is within about 25° of x).
    ///
    /// Returns `None` if `axis` is zero or `reference` is (anti)parallel to it.
    pub fn new(origin: Vec3, axis: Vec3, reference: Option<Vec3>) -> Option<Self> {
        let z = axis.try_normalize(0.0)?;
        let trial = match reference {
            Some(r) => r.try_normalize(0.0)?,
            None if z.x.abs() < 0.9 => Vec3::x(),
            None => Vec3::y(),
        };
        let x = (trial - z * z.dot(&trial)).try_normalize(1e-9)?;
        let y = z.cross(&x);
        Some(Frame { origin, x, y, z })
    }

    /// Scene position of a local point (m).
    pub fn point(&self, local: &Vec3) -> Vec3 {
        self.origin + self.direction(local)
    }

    /// Scene direction of a local vector (no translation).
    pub fn direction(&self, local: &Vec3) -> Vec3 {
        self.x * local.x + self.y * local.y + self.z * local.z
    }

    /// The same axes moved by `offset` (m).
    pub fn translated(&self, offset: &Vec3) -> Self {
        Frame {
            origin: self.origin + offset,
            ..*self
        }
    }
}
