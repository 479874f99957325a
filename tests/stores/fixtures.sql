-- Fixtures for the PostgreSQL store tests (tests/integration/stores.rs): an invented
-- chunk table as retrieval systems keep one, with an embedding column beside the text
-- (a float array here, standing for a vector column) that plumbline must leave alone.
CREATE TABLE kb_chunks (
    chunk_id   bigint PRIMARY KEY,
    source_doc text NOT NULL,
    body       text NOT NULL,
    groups     text[],
    heading    text,
    embedding  real[]
);
INSERT INTO kb_chunks VALUES
  (101, 'handbook/leave', 'Full-time staff receive 27 days of paid annual leave each year. Unused leave does not carry over.', '{all-staff}', 'Annual leave', '{0.12,0.4,-0.3}'),
  (102, 'handbook/leave', 'After five years of service the entitlement rises to 29 days.', '{all-staff}', 'Annual leave', '{0.1,0.2,0.3}'),
  (201, 'finance/board', 'The board approved a budget of 4.2 million for the new depot.', '{finance-board}', 'Board minutes', '{0.5,0.5,0.5}'),
  (301, 'ops/parking', 'Visitor parking is in bays 40 to 48 behind the warehouse.', NULL, 'Parking', NULL);

CREATE TABLE chunks (
    id     text PRIMARY KEY,
    text   text NOT NULL,
    doc    text,
    access jsonb,
    title  text
);
INSERT INTO chunks VALUES
  ('c-1', 'Refunds are paid within 14 days of the returned item arriving.', 'support/returns', '["all-staff"]', 'Returns'),
  ('c-2', 'Items must be unused and in their original packaging.', 'support/returns', '["all-staff"]', 'Returns');
