-- CreateIndex
CREATE INDEX "Tube_typeId_verdict_label_idx" ON "Tube"("typeId", "verdict", "label");

-- Label search: a trigram full-text index over Tube.label, so "contains" searches read the
-- index instead of every label. Kept in step with Tube by triggers; Prisma does not model it.
CREATE VIRTUAL TABLE "TubeLabelSearch" USING fts5("label", content='Tube', content_rowid='id', tokenize='trigram');
INSERT INTO "TubeLabelSearch"("rowid", "label") SELECT "id", "label" FROM "Tube";
CREATE TRIGGER "Tube_label_search_insert" AFTER INSERT ON "Tube" BEGIN
  INSERT INTO "TubeLabelSearch"("rowid", "label") VALUES (new."id", new."label");
END;
CREATE TRIGGER "Tube_label_search_delete" AFTER DELETE ON "Tube" BEGIN
  INSERT INTO "TubeLabelSearch"("TubeLabelSearch", "rowid", "label") VALUES ('delete', old."id", old."label");
END;
CREATE TRIGGER "Tube_label_search_update" AFTER UPDATE OF "label" ON "Tube" BEGIN
  INSERT INTO "TubeLabelSearch"("TubeLabelSearch", "rowid", "label") VALUES ('delete', old."id", old."label");
  INSERT INTO "TubeLabelSearch"("rowid", "label") VALUES (new."id", new."label");
END;
