// Sphere of radius 1.5 um as a body of revolution: the half disc r >= 0 of
// its (r, z) section, surrounded by a medium and a radial PML about the
// origin. Same geometry and sizes as meshes/half_disc_sphere.msh, which
// twistmode's own generator wrote (Gmsh is not needed).
// Lengths in metres. Physical groups: body, surroundings, pml (2D);
// axis (r = 0) and outer (1D).
R = 1.5e-6;
hb = 0.2e-6;            // largest edge in the body
hs = 0.4e-6;            // largest edge outside
r1 = R + 0.7e-6;        // PML starts here
r2 = r1 + 0.5e-6;       // outer boundary

Point(1) = {0, 0, 0, hb};
Point(2) = {0, -R, 0, hb};  Point(3) = {R, 0, 0, hb};  Point(4) = {0, R, 0, hb};
Point(5) = {0, -r1, 0, hs}; Point(6) = {r1, 0, 0, hs}; Point(7) = {0, r1, 0, hs};
Point(8) = {0, -r2, 0, hs}; Point(9) = {r2, 0, 0, hs}; Point(10) = {0, r2, 0, hs};

Circle(1) = {2, 1, 3}; Circle(2) = {3, 1, 4};     // sphere surface
Circle(3) = {5, 1, 6}; Circle(4) = {6, 1, 7};     // PML start
Circle(5) = {8, 1, 9}; Circle(6) = {9, 1, 10};    // outer boundary
Line(7) = {4, 2};                                 // axis inside the sphere
Line(8) = {7, 4}; Line(9) = {2, 5};               // axis in the surroundings
Line(10) = {10, 7}; Line(11) = {5, 8};            // axis in the PML

Curve Loop(1) = {1, 2, 7};
Curve Loop(2) = {9, 3, 4, 8, -2, -1};
Curve Loop(3) = {11, 5, 6, 10, -4, -3};
Plane Surface(1) = {1};
Plane Surface(2) = {2};
Plane Surface(3) = {3};
Physical Surface("body") = {1};
Physical Surface("surroundings") = {2};
Physical Surface("pml") = {3};
Physical Curve("axis") = {7, 8, 9, 10, 11};
Physical Curve("outer") = {5, 6};

Mesh.ElementOrder = 2;
Mesh.MshFileVersion = 4.1;
