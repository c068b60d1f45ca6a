/**
 * A test prop with fine surface detail, as the texture-baking issue describes it: a column 50 cm tall
 * and 20 cm across, cut by seven ring grooves (tori of tube radius 5 mm: 1 cm wide, 5 mm deep) and
 * twelve vertical flutes (boxes 1 cm wide), the cuts colored apart from the body. Decimated to
 * 2 000 triangles, the grooves are gone from the geometry (decimation error ≈ their depth).
 */
export function groovedColumnRecipe(): string {
  const rings = Array.from({ length: 7 }, (_, i) => ({
    type: 'torus',
    majorRadius: 0.1,
    minorRadius: 0.005,
    translate: [0, 0.07 + i * 0.06, 0],
    color: [0.15, 0.08, 0.05],
  }));
  const flutes = Array.from({ length: 12 }, (_, k) => {
    const deg = k * 30 + 15;
    const a = (deg * Math.PI) / 180;
    return {
      type: 'box',
      size: [0.01, 0.3, 0.012],
      translate: [0.1 * Math.sin(a), 0.25, 0.1 * Math.cos(a)],
      rotate: { axis: [0, 1, 0], degrees: deg },
      color: [0.3, 0.45, 0.6],
    };
  });
  return JSON.stringify({
    format: 'fieldkiln-recipe',
    version: 1,
    name: 'grooved test column',
    bounds: [-0.14, -0.02, -0.14, 0.14, 0.52, 0.14],
    root: {
      type: 'difference',
      children: [{ type: 'cylinder', radius: 0.1, height: 0.5, translate: [0, 0.25, 0], color: [0.75, 0.55, 0.35] }, ...rings, ...flutes],
    },
  });
}
