//! Plane vectors for the layout and the drawings.

/// A point or vector in bond-length units.
pub type Point = [f64; 2];

pub fn dist(a: Point, b: Point) -> f64 {
    ((a[0] - b[0]).powi(2) + (a[1] - b[1]).powi(2)).sqrt()
}

pub fn sub(a: Point, b: Point) -> Point {
    [a[0] - b[0], a[1] - b[1]]
}

pub fn add(a: Point, b: Point) -> Point {
    [a[0] + b[0], a[1] + b[1]]
}

pub fn scale(a: Point, s: f64) -> Point {
    [a[0] * s, a[1] * s]
}

/// Unit vector along `a` (x axis for a zero vector).
pub fn norm(a: Point) -> Point {
    let l = (a[0] * a[0] + a[1] * a[1]).sqrt();
    if l < 1e-9 {
        [1.0, 0.0]
    } else {
        [a[0] / l, a[1] / l]
    }
}

/// `a` turned counter-clockwise by `angle` radians.
pub fn rotate(a: Point, angle: f64) -> Point {
    let (s, c) = angle.sin_cos();
    [a[0] * c - a[1] * s, a[0] * s + a[1] * c]
}

pub fn cross(a: Point, b: Point) -> f64 {
    a[0] * b[1] - a[1] * b[0]
}
