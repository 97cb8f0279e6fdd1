-- CreateIndex
CREATE INDEX "Tube_typeId_verdict_state_idx" ON "Tube"("typeId", "verdict", "state");
