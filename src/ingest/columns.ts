/**
 * Column names are matched case- and space-insensitively: "Customer ID", "customer_id" and
 * " CUSTOMER-id " all name the same column. Extra attributes are stored under the same form.
 */
export function normalizeColumnName(name: string): string {
  return name
    .replace(/^\uFEFF/, '')
    .trim()
    .toLowerCase()
    .replace(/[\s\-.]+/g, '_')
    .replace(/_+/g, '_')
    .replace(/^_|_$/g, '');
}
