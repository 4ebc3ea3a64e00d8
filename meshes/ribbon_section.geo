// Flat ribbon section (1.2 um x 0.3 um, corner radius 50 nm) in a disc with
// a radial PML shell. Same geometry and sizes as meshes/ribbon_section.msh,
// which twistmode's own generator wrote (Gmsh is not needed).
// Lengths in metres. Physical groups: body, surroundings, pml (2D), outer (1D).
w = 1.2e-6; t = 0.3e-6; rc = 0.05e-6;
hb = 0.1e-6;             // largest edge in the body
hs = 0.3e-6;             // largest edge outside
rb = Sqrt((w/2 - rc)^2 + (t/2 - rc)^2) + rc;  // circumradius of the ribbon
r1 = rb + 0.6e-6;        // PML starts here
r2 = r1 + 0.4e-6;        // outer boundary

// Rounded rectangle
Point(1) = {w/2 - rc, -t/2 + rc, 0, hb};   // corner centres
Point(2) = {w/2 - rc,  t/2 - rc, 0, hb};
Point(3) = {-w/2 + rc, t/2 - rc, 0, hb};
Point(4) = {-w/2 + rc, -t/2 + rc, 0, hb};
Point(5) = {w/2, -t/2 + rc, 0, hb};  Point(6) = {w/2, t/2 - rc, 0, hb};
Point(7) = {w/2 - rc, t/2, 0, hb};   Point(8) = {-w/2 + rc, t/2, 0, hb};
Point(9) = {-w/2, t/2 - rc, 0, hb};  Point(10) = {-w/2, -t/2 + rc, 0, hb};
Point(11) = {-w/2 + rc, -t/2, 0, hb}; Point(12) = {w/2 - rc, -t/2, 0, hb};
Line(1) = {5, 6};  Circle(2) = {6, 2, 7};
Line(3) = {7, 8};  Circle(4) = {8, 3, 9};
Line(5) = {9, 10}; Circle(6) = {10, 4, 11};
Line(7) = {11, 12}; Circle(8) = {12, 1, 5};
Curve Loop(1) = {1, 2, 3, 4, 5, 6, 7, 8};

// Circles r1 (PML start) and r2 (outer)
Point(20) = {0, 0, 0, hs};
Point(21) = {r1, 0, 0, hs}; Point(22) = {-r1, 0, 0, hs};
Point(23) = {r2, 0, 0, hs}; Point(24) = {-r2, 0, 0, hs};
Circle(21) = {21, 20, 22}; Circle(22) = {22, 20, 21};
Circle(23) = {23, 20, 24}; Circle(24) = {24, 20, 23};
Curve Loop(2) = {21, 22};
Curve Loop(3) = {23, 24};

Plane Surface(1) = {1};       // body
Plane Surface(2) = {2, 1};    // surroundings
Plane Surface(3) = {3, 2};    // pml
Physical Surface("body") = {1};
Physical Surface("surroundings") = {2};
Physical Surface("pml") = {3};
Physical Curve("outer") = {23, 24};

Mesh.ElementOrder = 2;
Mesh.MshFileVersion = 4.1;
