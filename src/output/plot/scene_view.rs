//! The scene drawn to scale: temporary; replaced by the drawing module.

/// A plan view and a side view of every source, victim and shield, to scale, as one SVG
/// document (lengths in the drawing follow the scene's metres). Temporary; replaced by
/// the drawing module: for now a small SVG that says the drawing comes later.
pub fn scene_views_svg(scene: &crate::Scene) -> Result<String, String> {
    let parts = scene.sources.len() + scene.victims.len() + scene.shields.len();
    Ok(format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"640\" height=\"60\" \
         viewBox=\"0 0 640 60\" role=\"img\" aria-label=\"placeholder for the scene drawing\">\
         <rect x=\"1\" y=\"1\" width=\"638\" height=\"58\" fill=\"none\" stroke=\"#888\" \
         stroke-dasharray=\"6 4\"/>\
         <text x=\"320\" y=\"35\" text-anchor=\"middle\" font-family=\"sans-serif\" \
         font-size=\"15\">The drawing of the scene's {parts} parts comes later.</text></svg>"
    ))
}
