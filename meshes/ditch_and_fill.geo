// An invented section (no real site): a low fill beside a drainage ditch, on a sloping
// crust over soft clay holding a lens of softer clay, over sand. Plane strain, metres,
// x to the right, y up, original ground surface at y = 0.
//
// Hand-editable: change the numbers in the first block, keep the order of the points.
// Rebuild the shipped mesh (second-order, straight-sided triangles, Gmsh 2.2 ASCII):
//   gmsh -2 meshes/ditch_and_fill.geo -o meshes/ditch_and_fill.msh
// (the format and the element order are set below).

// ---------------------------------------------------------------- dimensions
W = 60;                   // width of the section
H = 20;                   // depth of the base below the ground
crust_left = 1.5;         // crust thickness at x = 0 ...
crust_right = 2.5;        // ... and at x = W (the crust base slopes)
clay_left = 11;           // depth of the soft clay's base at x = 0 ...
clay_right = 14;          // ... and at x = W
ditch_x = 12;             // left edge of the ditch at the surface
ditch_top = 4;            // ditch width at the surface
ditch_bottom = 1.5;       // ditch width at its bottom
ditch_depth = 1;          // (less than the crust thickness there)
fill_x = 24;              // left toe of the fill
fill_base = 16;           // fill width at the ground
fill_height = 2;
fill_slope = 2;           // horizontal per vertical

// element sizes at the points
fine = 0.5;               // ditch and fill corners
mid = 1.5;                // ground surface far from them, lens
coarse = 3;               // base

// ---------------------------------------------------------------- points
Point(1) = {0, 0, 0, mid};
Point(2) = {ditch_x, 0, 0, fine};
Point(3) = {ditch_x + (ditch_top - ditch_bottom) / 2, -ditch_depth, 0, fine};
Point(4) = {ditch_x + (ditch_top + ditch_bottom) / 2, -ditch_depth, 0, fine};
Point(5) = {ditch_x + ditch_top, 0, 0, fine};
Point(6) = {fill_x, 0, 0, fine};
Point(7) = {fill_x + fill_base, 0, 0, fine};
Point(8) = {W, 0, 0, mid};
Point(9) = {fill_x + fill_base - fill_slope * fill_height, fill_height, 0, fine};
Point(10) = {fill_x + fill_slope * fill_height, fill_height, 0, fine};
Point(11) = {0, -crust_left, 0, mid};
Point(12) = {W, -crust_right, 0, mid};
Point(13) = {0, -clay_left, 0, coarse};
Point(14) = {W, -clay_right, 0, coarse};
Point(15) = {0, -H, 0, coarse};
Point(16) = {W, -H, 0, coarse};
// the lens of softer clay (a hexagon inside the soft clay)
Point(21) = {32, -7.0, 0, mid};
Point(22) = {35, -5.8, 0, mid};
Point(23) = {41, -5.6, 0, mid};
Point(24) = {45, -6.8, 0, mid};
Point(25) = {42, -8.2, 0, mid};
Point(26) = {35, -8.3, 0, mid};

// ---------------------------------------------------------------- lines
Line(1) = {1, 2};         // ground, left of the ditch
Line(2) = {2, 3};         // ditch: left side, bottom, right side
Line(3) = {3, 4};
Line(4) = {4, 5};
Line(5) = {5, 6};         // ground between ditch and fill
Line(6) = {6, 7};         // ground under the fill
Line(7) = {7, 8};         // ground right of the fill
Line(8) = {7, 9};         // fill: right slope, crest, left slope
Line(9) = {9, 10};
Line(10) = {10, 6};
Line(11) = {8, 12};       // right side: crust, soft clay, sand
Line(12) = {12, 14};
Line(13) = {14, 16};
Line(14) = {16, 15};      // base
Line(15) = {15, 13};      // left side: sand, soft clay, crust
Line(16) = {13, 11};
Line(17) = {11, 1};
Line(18) = {11, 12};      // crust / soft clay (sloping)
Line(19) = {13, 14};      // soft clay / sand (sloping)
Line(20) = {21, 22};      // lens
Line(21) = {22, 23};
Line(22) = {23, 24};
Line(23) = {24, 25};
Line(24) = {25, 26};
Line(25) = {26, 21};

// ---------------------------------------------------------------- surfaces
Curve Loop(1) = {1, 2, 3, 4, 5, 6, 7, 11, -18, 17};     // crust (the ditch cut out)
Plane Surface(1) = {1};
Curve Loop(2) = {18, 12, -19, 16};                      // soft clay ...
Curve Loop(3) = {20, 21, 22, 23, 24, 25};               // ... around the lens
Plane Surface(2) = {2, 3};
Plane Surface(3) = {3};                                 // the lens
Curve Loop(4) = {19, 13, 14, 15};                       // sand
Plane Surface(4) = {4};
Curve Loop(5) = {6, 8, 9, 10};                          // fill
Plane Surface(5) = {5};

// ---------------------------------------------------------------- names
Physical Surface("crust") = {1};
Physical Surface("soft_clay") = {2};
Physical Surface("soft_lens") = {3};
Physical Surface("sand") = {4};
Physical Surface("fill") = {5};
Physical Curve("base") = {14};
Physical Curve("left") = {15, 16, 17};
Physical Curve("right") = {11, 12, 13};
Physical Curve("ground") = {1, 5, 6, 7};                // y = 0 where it remains, under the fill too
Physical Curve("ground_free") = {1, 5, 7};              // y = 0 open to the air
Physical Curve("ditch") = {2, 3, 4};
Physical Curve("fill_top") = {8, 9, 10};
Physical Curve("interface_1") = {18};                   // crust / soft clay
Physical Curve("interface_2") = {19};                   // soft clay / sand
Physical Curve("lens_edge") = {20, 21, 22, 23, 24, 25};

// ---------------------------------------------------------------- meshing
Mesh.ElementOrder = 2;
Mesh.SecondOrderLinear = 1;    // mid-side nodes at the middle of the straight sides
Mesh.Algorithm = 6;            // Frontal-Delaunay
Mesh.MshFileVersion = 2.2;
Mesh.Binary = 0;
