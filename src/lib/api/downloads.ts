/** Files the browser downloads itself (plain links, no fetch): the API paths in one place. */
export const templateCsvUrl = '/api/v1/intake/template.csv';
export const batchRawUrl = (id: number) => `/api/v1/batches/${id}/raw`;
export const batchErrorsCsvUrl = (id: number) => `/api/v1/batches/${id}/errors.csv`;
