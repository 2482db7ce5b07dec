// Starting documents for a new formulation: a complete, linear element of each cell that the author
// then makes their own. The name and title are filled in from the form.

export interface Template {
  id: string;
  label: string;
  body: string;
}

const SUMMARY = `summary: |
  Say what this element is for the engineers who will review and use it: the node order,
  its known properties, and why this quadrature was chosen.`;

export const TEMPLATES: Template[] = [
  {
    id: 'quadrilateral',
    label: 'Quadrilateral, four nodes, plane stress',
    body: `cell: quadrilateral
# corners counter-clockwise from (-1, -1)
nodes: [[-1, -1], [1, -1], [1, 1], [-1, 1]]
shape:
  - (1 - xi) * (1 - eta) / 4
  - (1 + xi) * (1 - eta) / 4
  - (1 + xi) * (1 + eta) / 4
  - (1 - xi) * (1 + eta) / 4
strain: plane-stress
quadrature: { rule: gauss, points: 2 }
material: { E: 1, nu: 0.3 }
thickness: 1
`
  },
  {
    id: 'triangle',
    label: 'Triangle, three nodes, plane stress',
    body: `cell: triangle
nodes: [[0, 0], [1, 0], [0, 1]]
definitions:
  - L1 = 1 - xi - eta
shape:
  - L1
  - xi
  - eta
strain: plane-stress
quadrature: { rule: simplex, degree: 1 }
material: { E: 1, nu: 0.3 }
thickness: 1
`
  },
  {
    id: 'interval',
    label: 'Bar, two nodes',
    body: `cell: interval
nodes: [[-1], [1]]
shape:
  - (1 - xi) / 2
  - (1 + xi) / 2
strain: bar
quadrature: { rule: gauss, points: 1 }
material: { E: 1, nu: 0.3 }
area: 1
`
  },
  {
    id: 'tetrahedron',
    label: 'Tetrahedron, four nodes, solid',
    body: `cell: tetrahedron
nodes: [[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1]]
shape:
  - 1 - xi - eta - zeta
  - xi
  - eta
  - zeta
strain: solid
quadrature: { rule: simplex, degree: 1 }
material: { E: 1, nu: 0.3 }
`
  },
  {
    id: 'hexahedron',
    label: 'Hexahedron, eight nodes, solid',
    body: `cell: hexahedron
# bottom face (zeta = -1) counter-clockwise, then the top face
nodes:
  - [-1, -1, -1]
  - [1, -1, -1]
  - [1, 1, -1]
  - [-1, 1, -1]
  - [-1, -1, 1]
  - [1, -1, 1]
  - [1, 1, 1]
  - [-1, 1, 1]
definitions:
  - h(a, b, c) = (1 + a * xi) * (1 + b * eta) * (1 + c * zeta) / 8
shape:
  - h(-1, -1, -1)
  - h(1, -1, -1)
  - h(1, 1, -1)
  - h(-1, 1, -1)
  - h(-1, -1, 1)
  - h(1, -1, 1)
  - h(1, 1, 1)
  - h(-1, 1, 1)
strain: solid
quadrature: { rule: gauss, points: 2 }
material: { E: 1, nu: 0.3 }
`
  }
];

/** The starting document: the template's element under the given name and title (the title as a quoted YAML scalar). */
export function startingDocument(templateId: string, name: string, title: string): string {
  const template = TEMPLATES.find((t) => t.id === templateId) ?? TEMPLATES[0];
  return `format: 1\nname: ${name}\ntitle: ${JSON.stringify(title)}\n${SUMMARY}\n${template.body}`;
}
